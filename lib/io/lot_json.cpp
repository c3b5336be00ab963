// lot_json.cpp — LotReport → JSON with a stable key order.
#include "io/lot_json.h"

#include <cmath>

#include <nlohmann/json.hpp>

#include "core/record/native_record.h"

namespace heft {
namespace {

using Json = nlohmann::ordered_json;

double Round4(double v) {
  if (!std::isfinite(v)) return v;
  const double r = std::round(v * 1e4) / 1e4;
  return r == 0.0 ? 0.0 : r;  // no "-0.0"
}

std::string Iso(std::int64_t ms) {
  char buf[32];
  FormatTimeMs(ms, buf);
  return buf;
}

}  // namespace

std::string LotToJson(const LotReport& lot) {
  const comply::LotFigures& f = lot.figures;
  Json j;
  j["line"] = lot.line;
  j["seq"] = lot.seq;
  j["lot_id"] = lot.lot_id;
  j["boundary"] = lot.boundary;
  j["partial"] = lot.partial;
  j["opened"] = Iso(lot.opened_ms);
  j["first_index"] = f.first_index;
  j["last_index"] = f.last_index;
  j["first_time"] = Iso(f.first_time_ms);
  j["last_time"] = Iso(f.last_time_ms);
  j["rules"] = lot.rules_id;
  j["nominal_g"] = Round4(lot.nominal_g);
  j["tne_g"] = Round4(lot.tne_g);
  j["t1_g"] = Round4(lot.t1_g);
  j["t2_g"] = lot.t2_g ? Json(Round4(*lot.t2_g)) : Json(nullptr);
  j["count"] = f.count;
  j["seen"] = f.seen;
  j["mean_g"] = Round4(f.mean_g);
  j["s_g"] = Round4(f.s_g);
  j["short_term_sigma_g"] = Round4(f.short_term_sigma_g);
  j["min_g"] = Round4(f.min_g);
  j["max_g"] = Round4(f.max_g);
  j["t1_count"] = f.t1_count;
  j["t1_fraction"] = Round4(f.t1_fraction);
  j["t2_count"] = f.t2_count;
  j["below_nominal"] = f.below_nominal;
  j["gross"] = f.gross;
  j["rejected"] = f.rejected;
  j["errors"] = f.errors;
  j["giveaway_g"] = Round4(f.giveaway_g);
  j["giveaway_per_pack_g"] = Round4(f.giveaway_per_pack_g);
  j["cost_per_kg"] = Round4(lot.cost_per_kg);
  j["giveaway_money"] = Round4(f.giveaway_money);
  Json verdicts = Json::array();
  for (const LotVerdict& v : lot.verdicts) {
    Json item;
    item["rule"] = v.rule_id;
    item["state"] = v.state;
    item["margin"] = Round4(v.margin);
    item["unit"] = v.unit;
    item["note"] = v.note;
    verdicts.push_back(std::move(item));
  }
  j["verdicts"] = std::move(verdicts);
  if (lot.advice) {
    const SafeTargetAdvice& a = *lot.advice;
    Json t;
    t["target_g"] = Round4(a.target_g);
    t["binding_rule"] = a.binding_rule;
    t["sigma_g"] = Round4(a.sigma_g);
    t["packs_per_hour"] = Round4(a.packs_per_hour);
    t["saving_per_pack_g"] = Round4(a.saving_per_pack_g);
    t["saving_per_hour_g"] = Round4(a.saving_per_hour_g);
    t["saving_per_year_kg"] = Round4(a.saving_per_year_kg);
    t["saving_per_year_money"] = Round4(a.saving_per_year_money);
    t["raise_needed"] = a.raise_needed;
    t["advice"] = a.text;
    j["safe_target"] = std::move(t);
  } else {
    j["safe_target"] = nullptr;
  }
  j["caution"] = kLotCaution;
  return j.dump(-1, ' ', false, Json::error_handler_t::replace);
}

}  // namespace heft
