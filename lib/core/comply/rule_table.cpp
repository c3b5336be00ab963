// rule_table.cpp — lookups over a RuleTable.
#include "core/comply/rule_table.h"

namespace heft::comply {

std::string_view SourceTagName(SourceTag tag) {
  switch (tag) {
    case SourceTag::kPrimary:
      return "S";
    case SourceTag::kSecondary:
      return "S2";
    case SourceTag::kComputed:
      return "X";
    case SourceTag::kMemory:
      return "M";
  }
  return "?";
}

std::string_view PackerRuleKindName(PackerRuleKind kind) {
  switch (kind) {
    case PackerRuleKind::kMeanNotBelowNominal:
      return "mean_not_below_nominal";
    case PackerRuleKind::kT1FractionAtMost:
      return "t1_fraction_at_most";
    case PackerRuleKind::kNoPackBelowT2:
      return "no_pack_below_t2";
    case PackerRuleKind::kNoPackBelowT1:
      return "no_pack_below_t1";
  }
  return "?";
}

const ToleranceBand* FindBand(const RuleTable& table, std::int64_t nominal_units,
                              bool allow_unconfirmed, bool* unconfirmed_skipped) {
  if (unconfirmed_skipped) *unconfirmed_skipped = false;
  for (std::size_t i = 0; i < table.bands.size(); ++i) {
    const ToleranceBand& band = table.bands[i];
    const bool above_lower =
        i == 0 ? nominal_units >= band.from_units : nominal_units > band.from_units;
    const bool below_upper = !band.to_units || nominal_units <= *band.to_units;
    if (!above_lower || !below_upper) continue;
    if (!band.provenance.confirmed && !allow_unconfirmed) {
      if (unconfirmed_skipped) *unconfirmed_skipped = true;
      return nullptr;
    }
    return &band;
  }
  return nullptr;
}

std::vector<const SamplingPlan*> PlansForLot(const PlanSet& set, std::int64_t lot_size,
                                             bool allow_unconfirmed) {
  std::vector<const SamplingPlan*> found;
  for (const SamplingPlan& plan : set.plans) {
    if (!plan.Covers(lot_size)) continue;
    if (!plan.provenance.confirmed && !allow_unconfirmed) continue;
    found.push_back(&plan);
  }
  return found;
}

const PackerRule* FindRule(const RuleTable& table, PackerRuleKind kind) {
  for (const PackerRule& rule : table.rules) {
    if (rule.kind == kind) return &rule;
  }
  return nullptr;
}

}  // namespace heft::comply
