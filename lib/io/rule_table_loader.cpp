// rule_table_loader.cpp — YAML → comply::RuleTable, with file:line:column errors.
#include "io/rule_table_loader.h"

#include <yaml-cpp/yaml.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <fstream>
#include <initializer_list>
#include <optional>
#include <set>
#include <sstream>
#include <string_view>

namespace heft {

namespace {

using comply::kPercentScale;
using comply::kUnitsPerGram;

class Reader {
 public:
  Reader(std::string name, std::vector<std::string>* errors)
      : name_(std::move(name)), errors_(errors) {}

  std::string Where(const YAML::Node& node) const {
    const YAML::Mark mark = node.Mark();
    if (mark.is_null()) return name_;
    // yaml-cpp marks are 0-based.
    return name_ + ":" + std::to_string(mark.line + 1) + ":" + std::to_string(mark.column + 1);
  }

  void Error(const YAML::Node& node, const std::string& path, const std::string& message) {
    errors_->push_back(Where(node) + ": " + path + ": " + message);
  }

  // Reports keys of `map` that are not in `allowed` (catches typos).
  void CheckKeys(const YAML::Node& map, const std::string& path,
                 std::initializer_list<std::string_view> allowed) {
    for (auto it = map.begin(); it != map.end(); ++it) {
      const std::string key = it->first.Scalar();
      bool known = false;
      for (std::string_view a : allowed) known = known || key == a;
      if (!known) Error(it->first, Join(path, key), "unknown key");
    }
  }

  bool IsMap(const YAML::Node& node, const std::string& path) {
    if (node.IsMap()) return true;
    Error(node, path, "expected a mapping");
    return false;
  }

  // Child `key` of `map`; reports a missing required key at the map's position.
  std::optional<YAML::Node> Child(const YAML::Node& map, const std::string& path, const char* key,
                                  bool required) {
    const YAML::Node child = map[key];
    if (!child.IsDefined() || child.IsNull()) {
      if (required) Error(map, Join(path, key), "missing");
      return std::nullopt;
    }
    return child;
  }

  std::optional<std::string> String(const YAML::Node& map, const std::string& path, const char* key,
                                    bool required) {
    auto node = Child(map, path, key, required);
    if (!node) return std::nullopt;
    if (!node->IsScalar()) {
      Error(*node, Join(path, key), "expected text");
      return std::nullopt;
    }
    if (required && node->Scalar().empty()) {
      Error(*node, Join(path, key), "must not be empty");
      return std::nullopt;
    }
    return node->Scalar();
  }

  std::optional<double> Number(const YAML::Node& map, const std::string& path, const char* key,
                               bool required) {
    auto node = Child(map, path, key, required);
    if (!node) return std::nullopt;
    double value = 0.0;
    if (!node->IsScalar() || !YAML::convert<double>::decode(*node, value) ||
        !std::isfinite(value)) {
      Error(*node, Join(path, key), "not a finite number");
      return std::nullopt;
    }
    return value;
  }

  std::optional<long long> Integer(const YAML::Node& map, const std::string& path, const char* key,
                                   bool required) {
    auto node = Child(map, path, key, required);
    if (!node) return std::nullopt;
    long long value = 0;
    if (!node->IsScalar() || !YAML::convert<long long>::decode(*node, value)) {
      Error(*node, Join(path, key), "not a whole number");
      return std::nullopt;
    }
    return value;
  }

  std::optional<bool> Bool(const YAML::Node& map, const std::string& path, const char* key) {
    auto node = Child(map, path, key, false);
    if (!node) return std::nullopt;
    bool value = false;
    if (!node->IsScalar() || !YAML::convert<bool>::decode(*node, value)) {
      Error(*node, Join(path, key), "expected true or false");
      return std::nullopt;
    }
    return value;
  }

  // Grams (≥ 0) → exact units; more than 4 decimals is refused, not rounded.
  std::optional<std::int64_t> Mass(const YAML::Node& map, const std::string& path, const char* key,
                                   bool required) {
    auto grams = Number(map, path, key, required);
    if (!grams) return std::nullopt;
    if (*grams < 0.0 || *grams > 1e9) {
      Error(map[key], Join(path, key), "must be between 0 and 1e9 g");
      return std::nullopt;
    }
    const double scaled = *grams * static_cast<double>(kUnitsPerGram);
    const double rounded = std::round(scaled);
    if (std::fabs(scaled - rounded) > 1e-6 * std::max(1.0, std::fabs(scaled))) {
      Error(map[key], Join(path, key), "more than 4 decimal places of a gram");
      return std::nullopt;
    }
    return static_cast<std::int64_t>(rounded);
  }

  std::optional<comply::Provenance> Provenance(const YAML::Node& map, const std::string& path,
                                               const char* source_key = "source",
                                               const char* tag_key = "tag") {
    comply::Provenance p;
    auto source = String(map, path, source_key, true);
    auto tag_node = Child(map, path, tag_key, true);
    std::optional<comply::SourceTag> tag;
    if (tag_node) {
      const std::string t = tag_node->IsScalar() ? tag_node->Scalar() : "";
      if (t == "S") tag = comply::SourceTag::kPrimary;
      if (t == "S2") tag = comply::SourceTag::kSecondary;
      if (t == "X") tag = comply::SourceTag::kComputed;
      if (t == "M") tag = comply::SourceTag::kMemory;
      if (!tag) Error(*tag_node, Join(path, tag_key), "must be one of S, S2, X, M");
    }
    auto confirmed = Bool(map, path, "confirmed");
    auto note = String(map, path, "note", false);
    if (!source || !tag) return std::nullopt;
    p.source = *source;
    p.tag = *tag;
    p.confirmed = confirmed.value_or(true);
    p.note = note.value_or("");
    return p;
  }

  static std::string Join(const std::string& path, std::string_view key) {
    return path.empty() ? std::string(key) : path + "." + std::string(key);
  }
  static std::string Index(const std::string& path, std::size_t i) {
    return path + "[" + std::to_string(i) + "]";
  }

 private:
  std::string name_;
  std::vector<std::string>* errors_;
};

void ReadBands(Reader& r, const YAML::Node& tolerance, comply::RuleTable* table) {
  const std::string path = "tolerance";
  auto bands = r.Child(tolerance, path, "bands", true);
  if (!bands) return;
  const std::string bpath = path + ".bands";
  if (!bands->IsSequence() || bands->size() == 0) {
    r.Error(*bands, bpath, "expected a non-empty list of bands");
    return;
  }
  for (std::size_t i = 0; i < bands->size(); ++i) {
    const YAML::Node b = (*bands)[i];
    const std::string p = Reader::Index(bpath, i);
    if (!r.IsMap(b, p)) continue;
    r.CheckKeys(b, p, {"from_g", "to_g", "percent", "grams", "source", "tag", "confirmed", "note"});
    comply::ToleranceBand band;
    auto from = r.Mass(b, p, "from_g", true);
    auto to = r.Mass(b, p, "to_g", false);
    const bool has_percent = b["percent"].IsDefined();
    const bool has_grams = b["grams"].IsDefined();
    auto provenance = r.Provenance(b, p);
    bool ok = from.has_value() && provenance.has_value();
    if (has_percent == has_grams) {
      r.Error(b, p, "give exactly one of `percent` and `grams`");
      ok = false;
    } else if (has_percent) {
      auto pct = r.Number(b, p, "percent", true);
      if (pct && (*pct <= 0.0 || *pct > 100.0)) {
        r.Error(b["percent"], p + ".percent", "must be above 0 and at most 100");
        pct.reset();
      }
      if (pct) {
        const double scaled = *pct * static_cast<double>(kPercentScale);
        if (std::fabs(scaled - std::round(scaled)) > 1e-6 * std::max(1.0, scaled)) {
          r.Error(b["percent"], p + ".percent", "more than 3 decimal places");
          pct.reset();
        } else {
          band.value = static_cast<std::int64_t>(std::round(scaled));
        }
      }
      band.percent = true;
      ok = ok && pct.has_value();
    } else {
      auto grams = r.Mass(b, p, "grams", true);
      if (grams && *grams == 0) {
        r.Error(b["grams"], p + ".grams", "must be above 0");
        grams.reset();
      }
      if (grams) band.value = *grams;
      ok = ok && grams.has_value();
    }
    if (!ok) continue;
    band.from_units = *from;
    band.to_units = to;
    band.provenance = *provenance;
    if (to && *to <= *from) {
      r.Error(b, p, "to_g must be above from_g");
      continue;
    }
    if (!table->bands.empty()) {
      const comply::ToleranceBand& prev = table->bands.back();
      if (!prev.to_units) {
        r.Error(b, p, "a band follows one without `to_g` (only the last may be open)");
        continue;
      }
      if (*prev.to_units != band.from_units) {
        r.Error(b, p, "from_g must equal the previous band's to_g (bands ascending, no gaps)");
        continue;
      }
    }
    table->bands.push_back(band);
  }
}

void ReadTolerance(Reader& r, const YAML::Node& root, comply::RuleTable* table) {
  auto tolerance = r.Child(root, "", "tolerance", true);
  if (!tolerance || !r.IsMap(*tolerance, "tolerance")) return;
  const std::string path = "tolerance";
  r.CheckKeys(*tolerance, path,
              {"name", "bands", "round_percent_up_to_g", "rounding_source", "rounding_tag"});
  table->tolerance_name = r.String(*tolerance, path, "name", false).value_or("TNE");
  ReadBands(r, *tolerance, table);
  if ((*tolerance)["round_percent_up_to_g"].IsDefined()) {
    auto step = r.Mass(*tolerance, path, "round_percent_up_to_g", true);
    if (step && *step == 0) {
      r.Error((*tolerance)["round_percent_up_to_g"], path + ".round_percent_up_to_g",
              "must be above 0 (leave it out for no rounding)");
    } else if (step) {
      table->percent_round_up_units = *step;
    }
    if (auto p = r.Provenance(*tolerance, path, "rounding_source", "rounding_tag")) {
      table->rounding_provenance = *p;
    }
  }
}

std::optional<comply::PackerRuleKind> RuleKind(const std::string& text) {
  using K = comply::PackerRuleKind;
  for (K k :
       {K::kMeanNotBelowNominal, K::kT1FractionAtMost, K::kNoPackBelowT2, K::kNoPackBelowT1}) {
    if (text == comply::PackerRuleKindName(k)) return k;
  }
  return std::nullopt;
}

void ReadRules(Reader& r, const YAML::Node& root, comply::RuleTable* table) {
  auto rules = r.Child(root, "", "packer_rules", true);
  if (!rules) return;
  if (!rules->IsSequence() || rules->size() == 0) {
    r.Error(*rules, "packer_rules", "expected a non-empty list of rules");
    return;
  }
  std::set<std::string> ids;
  for (std::size_t i = 0; i < rules->size(); ++i) {
    const YAML::Node node = (*rules)[i];
    const std::string p = Reader::Index("packer_rules", i);
    if (!r.IsMap(node, p)) continue;
    r.CheckKeys(node, p,
                {"id", "kind", "text", "limit_percent", "source", "tag", "confirmed", "note"});
    comply::PackerRule rule;
    auto id = r.String(node, p, "id", true);
    auto kind_text = r.String(node, p, "kind", true);
    auto provenance = r.Provenance(node, p);
    std::optional<comply::PackerRuleKind> kind;
    if (kind_text) {
      kind = RuleKind(*kind_text);
      if (!kind) {
        r.Error(node["kind"], p + ".kind",
                "unknown kind '" + *kind_text +
                    "' (mean_not_below_nominal, t1_fraction_at_most, no_pack_below_t2, "
                    "no_pack_below_t1)");
      }
    }
    if (id && !ids.insert(*id).second) {
      r.Error(node["id"], p + ".id", "duplicate rule id '" + *id + "'");
      id.reset();
    }
    bool ok = id && kind && provenance;
    if (kind == comply::PackerRuleKind::kT1FractionAtMost) {
      auto pct = r.Number(node, p, "limit_percent", true);
      if (pct && (*pct <= 0.0 || *pct >= 100.0)) {
        r.Error(node["limit_percent"], p + ".limit_percent", "must be between 0 and 100");
        pct.reset();
      }
      if (pct) rule.limit_fraction = *pct / 100.0;
      ok = ok && pct.has_value();
    } else if (node["limit_percent"].IsDefined()) {
      r.Error(node["limit_percent"], p + ".limit_percent",
              "only rules of kind t1_fraction_at_most take a limit");
      ok = false;
    }
    if (!ok) continue;
    rule.id = *id;
    rule.kind = *kind;
    rule.text = r.String(node, p, "text", false).value_or("");
    rule.provenance = *provenance;
    table->rules.push_back(rule);
  }
}

std::optional<comply::MeanTest> ReadMeanTest(Reader& r, const YAML::Node& node,
                                             const std::string& p) {
  if (!r.IsMap(node, p)) return std::nullopt;
  r.CheckKeys(node, p, {"n", "quantile", "published_k", "source", "tag", "confirmed", "note"});
  comply::MeanTest test;
  auto n = r.Integer(node, p, "n", true);
  auto quantile = r.Number(node, p, "quantile", false);
  auto k = r.Number(node, p, "published_k", false);
  auto provenance = r.Provenance(node, p);
  bool ok = n && provenance;
  if (n && (*n == 1 || *n < 0 || *n > 100000)) {
    r.Error(node["n"], p + ".n", "must be 0 (whole lot) or between 2 and 100000");
    ok = false;
  }
  if (quantile && !(*quantile > 0.5 && *quantile < 1.0)) {
    r.Error(node["quantile"], p + ".quantile", "must be between 0.5 and 1");
    ok = false;
  }
  if (k && *k <= 0.0) {
    r.Error(node["published_k"], p + ".published_k", "must be above 0");
    ok = false;
  }
  if (!ok) return std::nullopt;
  test.n = static_cast<int>(*n);
  test.quantile = quantile.value_or(0.995);
  test.published_k = k;
  test.provenance = *provenance;
  return test;
}

std::optional<comply::SamplingPlan> ReadPlan(Reader& r, const YAML::Node& node,
                                             const std::string& p) {
  if (!r.IsMap(node, p)) return std::nullopt;
  r.CheckKeys(node, p,
              {"lots", "stages", "whole_lot", "mean_test", "source", "tag", "confirmed", "note"});
  comply::SamplingPlan plan;
  bool ok = true;
  if (auto lots = r.Child(node, p, "lots", true); lots && r.IsMap(*lots, p + ".lots")) {
    r.CheckKeys(*lots, p + ".lots", {"from", "to"});
    auto from = r.Integer(*lots, p + ".lots", "from", true);
    auto to = r.Integer(*lots, p + ".lots", "to", false);
    if (from && *from < 1) {
      r.Error((*lots)["from"], p + ".lots.from", "must be at least 1");
      from.reset();
    }
    if (from && to && *to < *from) {
      r.Error((*lots)["to"], p + ".lots.to", "must not be below lots.from");
      to.reset();
      ok = false;
    }
    ok = ok && from.has_value();
    if (from) plan.lot_min = *from;
    if (to) plan.lot_max = *to;
  } else {
    ok = false;
  }

  const bool has_stages = node["stages"].IsDefined();
  const bool has_whole = node["whole_lot"].IsDefined();
  if (has_stages == has_whole) {
    r.Error(node, p, "give exactly one of `stages` and `whole_lot`");
    ok = false;
  } else if (has_whole) {
    const YAML::Node whole = node["whole_lot"];
    if (r.IsMap(whole, p + ".whole_lot")) {
      r.CheckKeys(whole, p + ".whole_lot", {"max_defective_percent"});
      auto pct = r.Number(whole, p + ".whole_lot", "max_defective_percent", true);
      if (pct && (*pct < 0.0 || *pct > 100.0)) {
        r.Error(whole["max_defective_percent"], p + ".whole_lot.max_defective_percent",
                "must be between 0 and 100");
        pct.reset();
      }
      ok = ok && pct.has_value();
      plan.whole_lot = true;
      if (pct) plan.whole_lot_max_defective_fraction = *pct / 100.0;
    } else {
      ok = false;
    }
  } else {
    const YAML::Node stages = node["stages"];
    if (!stages.IsSequence() || stages.size() == 0) {
      r.Error(stages, p + ".stages", "expected a non-empty list of stages");
      ok = false;
    } else {
      for (std::size_t i = 0; i < stages.size(); ++i) {
        const YAML::Node s = stages[i];
        const std::string sp = Reader::Index(p + ".stages", i);
        if (!r.IsMap(s, sp)) {
          ok = false;
          continue;
        }
        r.CheckKeys(s, sp, {"size", "accept", "reject"});
        auto size = r.Integer(s, sp, "size", true);
        auto accept = r.Integer(s, sp, "accept", true);
        auto reject = r.Integer(s, sp, "reject", true);
        if (!size || !accept || !reject) {
          ok = false;
          continue;
        }
        if (*size < 1 || *size > 100000 || *accept < 0 || *reject <= *accept || *reject > 100000) {
          r.Error(s, sp, "needs size ≥ 1 and 0 ≤ accept < reject");
          ok = false;
          continue;
        }
        if (i + 1 == stages.size() && *reject != *accept + 1) {
          r.Error(s, sp, "the last stage must decide: reject = accept + 1");
          ok = false;
        }
        plan.stages.push_back(
            {static_cast<int>(*size), static_cast<int>(*accept), static_cast<int>(*reject)});
      }
    }
  }
  if (node["mean_test"].IsDefined()) {
    plan.mean_test = ReadMeanTest(r, node["mean_test"], p + ".mean_test");
    ok = ok && plan.mean_test.has_value();
  }
  auto provenance = r.Provenance(node, p);
  if (!ok || !provenance) return std::nullopt;
  plan.provenance = *provenance;
  return plan;
}

void ReadPlanSets(Reader& r, const YAML::Node& root, comply::RuleTable* table) {
  auto sets = r.Child(root, "", "plan_sets", false);
  if (!sets) return;
  if (!sets->IsSequence()) {
    r.Error(*sets, "plan_sets", "expected a list");
    return;
  }
  std::set<std::string> ids;
  for (std::size_t i = 0; i < sets->size(); ++i) {
    const YAML::Node node = (*sets)[i];
    const std::string p = Reader::Index("plan_sets", i);
    if (!r.IsMap(node, p)) continue;
    r.CheckKeys(node, p, {"id", "name", "destructive", "plans"});
    comply::PlanSet set;
    auto id = r.String(node, p, "id", true);
    if (id && !ids.insert(*id).second) {
      r.Error(node["id"], p + ".id", "duplicate plan set id '" + *id + "'");
      id.reset();
    }
    set.name = r.String(node, p, "name", false).value_or("");
    set.destructive = r.Bool(node, p, "destructive").value_or(false);
    auto plans = r.Child(node, p, "plans", true);
    if (plans && (!plans->IsSequence() || plans->size() == 0)) {
      r.Error(*plans, p + ".plans", "expected a non-empty list of plans");
      plans.reset();
    }
    if (!id || !plans) continue;
    set.id = *id;
    for (std::size_t j = 0; j < plans->size(); ++j) {
      const std::string pp = Reader::Index(p + ".plans", j);
      auto plan = ReadPlan(r, (*plans)[j], pp);
      if (!plan) continue;
      bool overlaps = false;
      for (const comply::SamplingPlan& other : set.plans) {
        // Ranges [a, b] and [c, d] (open ends = no limit) overlap iff max(a, c) ≤ min(b, d).
        const std::int64_t lo = std::max(plan->lot_min, other.lot_min);
        const std::int64_t hi =
            std::min(plan->lot_max.value_or(INT64_MAX), other.lot_max.value_or(INT64_MAX));
        overlaps = overlaps || lo <= hi;
      }
      if (overlaps) {
        r.Error((*plans)[j], pp + ".lots", "lot range overlaps an earlier plan of this set");
        continue;
      }
      set.plans.push_back(*plan);
    }
    table->plan_sets.push_back(set);
  }
}

}  // namespace

Status LoadRuleTableText(const std::string& text, const std::string& name, comply::RuleTable* out,
                         std::vector<std::string>* errors) {
  std::vector<std::string> local_errors;
  std::vector<std::string>* errs = errors ? errors : &local_errors;
  errs->clear();
  YAML::Node loaded;
  try {
    loaded = YAML::Load(text);
  } catch (const YAML::ParserException& e) {
    errs->push_back(name + ":" + std::to_string(e.mark.line + 1) + ":" +
                    std::to_string(e.mark.column + 1) + ": YAML syntax: " + e.msg);
    return Status::Error(errs->front());
  }
  const YAML::Node& root = loaded;  // const: lookups must never insert keys
  Reader r(name, errs);
  comply::RuleTable table;
  table.origin = name;
  try {
    if (!root.IsMap()) {
      errs->push_back(name + ": expected a mapping at the top (id, name, tolerance, ...)");
    } else {
      r.CheckKeys(
          root, "",
          {"id", "name", "caution", "tolerance", "t2_multiple", "packer_rules", "plan_sets"});
      table.id = r.String(root, "", "id", true).value_or("");
      table.name = r.String(root, "", "name", true).value_or("");
      table.caution = r.String(root, "", "caution", false).value_or("");
      ReadTolerance(r, root, &table);
      if (auto m = r.Integer(root, "", "t2_multiple", false)) {
        if (*m < 2 || *m > 10) {
          r.Error(root["t2_multiple"], "t2_multiple", "must be between 2 and 10");
        } else {
          table.t2_multiple = static_cast<int>(*m);
        }
      }
      ReadRules(r, root, &table);
      ReadPlanSets(r, root, &table);
      if (!table.t2_multiple && comply::FindRule(table, comply::PackerRuleKind::kNoPackBelowT2)) {
        r.Error(root, "packer_rules", "a no_pack_below_t2 rule needs `t2_multiple`");
      }
    }
  } catch (const YAML::Exception& e) {
    // Defensive: yaml-cpp throws on some malformed nodes; report instead of crashing.
    errs->push_back(name + ": " + e.what());
  }
  if (!errs->empty()) {
    return Status::Error(
        errs->front() +
        (errs->size() > 1 ? " (and " + std::to_string(errs->size() - 1) + " more)" : ""));
  }
  *out = std::move(table);
  return Status::Ok();
}

Status LoadRuleTableFile(const std::string& path, comply::RuleTable* out,
                         std::vector<std::string>* errors) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    const std::string message = path + ": cannot open the rule table";
    if (errors) *errors = {message};
    return Status::Error(message);
  }
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) {
    const std::string message = path + ": read error";
    if (errors) *errors = {message};
    return Status::Error(message);
  }
  return LoadRuleTableText(text.str(), path, out, errors);
}

}  // namespace heft
