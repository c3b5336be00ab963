// checkpoint_test.cpp — restart state: a LotAccumulator saved part way through
// a lot and restored into a fresh one continues exactly as if never stopped.
#include <catch2/catch.hpp>

#include <cstdint>
#include <random>
#include <string>
#include <vector>

#include "core/comply/lot_accumulator.h"
#include "core/comply/net_content_limits.h"
#include "io/rule_table_loader.h"

namespace {

using namespace heft::comply;

NetContentLimits Limits500() {
  static const RuleTable table = [] {
    RuleTable t;
    std::vector<std::string> errors;
    REQUIRE(
        heft::LoadRuleTableFile(
            std::string(HEFT_SOURCE_DIR) + "/config/rules/eu-average-quantity.yaml", &t, &errors)
            .ok());
    return t;
  }();
  NetContentLimits l;
  REQUIRE(ComputeLimits(table, 500.0, false, &l).ok());
  return l;
}

struct Pack {
  double grams;
  PackRole role;
};

// Millbrook oats-1, 500 g bags: in-lot packs around 502 g (sigma 4 g, so some
// fall below T1 = 485 g), every 50th rejected, a gross pack and an error.
std::vector<Pack> Feed() {
  std::mt19937_64 rng(6);
  std::normal_distribution<double> weight(502.0, 4.0);
  std::vector<Pack> packs;
  for (int i = 0; i < 1000; ++i) {
    PackRole role = i % 50 == 49 ? PackRole::kRejected : PackRole::kInLot;
    if (i == 300) role = PackRole::kGross;
    if (i == 700) role = PackRole::kError;
    packs.push_back({role == PackRole::kGross ? 20.0 : weight(rng), role});
  }
  return packs;
}

void CheckSame(const LotFigures& a, const LotFigures& b) {
  CHECK(a.count == b.count);
  CHECK(a.rejected == b.rejected);
  CHECK(a.gross == b.gross);
  CHECK(a.errors == b.errors);
  CHECK(a.seen == b.seen);
  CHECK(a.mean_g == b.mean_g);  // exact: the same arithmetic in the same order
  CHECK(a.s_g == b.s_g);
  CHECK(a.short_term_sigma_g == b.short_term_sigma_g);
  CHECK(a.min_g == b.min_g);
  CHECK(a.max_g == b.max_g);
  CHECK(a.t1_count == b.t1_count);
  CHECK(a.below_nominal == b.below_nominal);
  CHECK(a.rejected_below_t1 == b.rejected_below_t1);
  CHECK(a.giveaway_g == b.giveaway_g);
  CHECK(a.first_time_ms == b.first_time_ms);
  CHECK(a.last_time_ms == b.last_time_ms);
  CHECK(a.first_index == b.first_index);
  CHECK(a.last_index == b.last_index);
}

TEST_CASE("lot accumulator: save, restore into a fresh one, continue", "[checkpoint]") {
  const NetContentLimits limits = Limits500();
  const LotSettings settings{0.0, false};
  const std::vector<Pack> packs = Feed();
  const std::int64_t t0 = 1'772'431'200'000;  // 2026-03-02T06:00Z

  LotAccumulator whole(limits, settings);
  for (std::size_t i = 0; i < packs.size(); ++i) {
    whole.Add(packs[i].grams, packs[i].role, t0 + static_cast<std::int64_t>(i) * 500,
              static_cast<std::int64_t>(i));
  }

  for (std::size_t cut : {std::size_t{0}, std::size_t{1}, std::size_t{301}, std::size_t{999}}) {
    LotAccumulator before(limits, settings);
    for (std::size_t i = 0; i < cut; ++i) {
      before.Add(packs[i].grams, packs[i].role, t0 + static_cast<std::int64_t>(i) * 500,
                 static_cast<std::int64_t>(i));
    }
    const LotAccumulator::Checkpoint saved = before.Save();
    LotAccumulator after(limits, settings);  // the new process
    after.Restore(saved);
    CheckSame(after.Figures(), before.Figures());
    for (std::size_t i = cut; i < packs.size(); ++i) {
      after.Add(packs[i].grams, packs[i].role, t0 + static_cast<std::int64_t>(i) * 500,
                static_cast<std::int64_t>(i));
    }
    INFO("cut after " << cut << " packs");
    CheckSame(after.Figures(), whole.Figures());
  }
  // The figures themselves are checked against hand-worked lots in comply_lot_test.cpp.
  CHECK(whole.Figures().count == 978);  // 1000 − 20 rejected − 1 gross − 1 error
}

}  // namespace
