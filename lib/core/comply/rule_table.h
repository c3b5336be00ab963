// rule_table.h — a jurisdiction's net-content rules (tolerance bands, packer's
// rules, reference-test sampling plans) as plain data.
//
// Filled by io/rule_table_loader from a YAML file under config/rules/; read by
// the compliance core (limits, reference test, lot verdicts, safe target) and by
// `heft limits`. Every row keeps where it came from and how sure we are of it
// (the [S] [S2] [X] [M] tags of check-values.md), and rows marked
// `confirmed: false` are skipped unless the caller opts in. Immutable value
// type after loading; safe to share between threads for reading.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace heft::comply {

// Masses are fixed point: integer tenths of a milligram, so that "round the
// percentage up to the next 0.1 g" is exact (check-values.md §1.2 warns that a
// double landing at 9.000000000000002 would round up to 9.1).
inline constexpr std::int64_t kUnitsPerGram = 10'000;
// Percentages are integer thousandths of a percent (4.5 % = 4500).
inline constexpr std::int64_t kPercentScale = 1'000;

// How sure we are of a row (legend of check-values.md).
enum class SourceTag : std::uint8_t {
  kPrimary,    // [S]  read in a primary/official source
  kSecondary,  // [S2] read in a secondary source
  kComputed,   // [X]  computed independently of any published table
  kMemory,     // [M]  from memory, unconfirmed
};
std::string_view SourceTagName(SourceTag tag);  // "S", "S2", "X", "M"

struct Provenance {
  std::string source;  // document and section, e.g. "76/211/EEC Annex I §2.4"
  SourceTag tag = SourceTag::kPrimary;
  bool confirmed = true;  // false: kept for reference, used only on opt-in
  std::string note;       // free text, may be empty
};

// One row of the tolerance table (TNE in the EU, MAV in the US). Covers
// nominal quantities above `from_units` up to and including `to_units`; the
// first band also includes its lower edge. nullopt `to_units` = no upper end.
struct ToleranceBand {
  std::int64_t from_units = 0;
  std::optional<std::int64_t> to_units;
  bool percent = false;    // true: `value` is a percentage of the nominal
  std::int64_t value = 0;  // percent: thousandths of a percent; else mass units
  Provenance provenance;
};

enum class PackerRuleKind : std::uint8_t {
  kMeanNotBelowNominal,  // mean content of the lot ≥ nominal
  kT1FractionAtMost,     // share of packs below T1 ≤ limit
  kNoPackBelowT2,        // no pack below T2 = nominal − 2 × tolerance
  kNoPackBelowT1,        // no pack below T1 (whole-lot reading of an individual-pack rule)
};
std::string_view PackerRuleKindName(PackerRuleKind kind);  // YAML spelling

struct PackerRule {
  std::string id;  // e.g. "mean", "t1_fraction"
  PackerRuleKind kind = PackerRuleKind::kMeanNotBelowNominal;
  std::string text;             // one sentence for people
  double limit_fraction = 0.0;  // kT1FractionAtMost only (0.025 = 2.5 %)
  Provenance provenance;
};

// One stage of a sampling plan. Acceptance and rejection numbers apply to the
// cumulative count of defectives (packs below T1) over this and earlier stages.
struct SamplingStage {
  int size = 0;
  int accept = 0;  // accept if cumulative defectives ≤ accept
  int reject = 1;  // reject if cumulative defectives ≥ reject
};

// The mean criterion x̄ ≥ Qn − k·s, k = t(quantile; n − 1)/√n.
struct MeanTest {
  int n = 0;  // packs the mean is taken over; 0 = the whole lot, criterion x̄ ≥ Qn
  double quantile = 0.995;
  std::optional<double> published_k;  // the factor as printed in the source
  Provenance provenance;
};

struct SamplingPlan {
  std::int64_t lot_min = 1;
  std::optional<std::int64_t> lot_max;            // inclusive; nullopt = no upper end
  bool whole_lot = false;                         // every pack is checked
  double whole_lot_max_defective_fraction = 0.0;  // whole_lot only
  std::vector<SamplingStage> stages;              // empty when whole_lot
  std::optional<MeanTest> mean_test;
  Provenance provenance;

  bool Covers(std::int64_t lot_size) const {
    return lot_size >= lot_min && (!lot_max || lot_size <= *lot_max);
  }
};

struct PlanSet {
  std::string id;  // e.g. "eu-nondestructive-double"
  std::string name;
  bool destructive = false;
  std::vector<SamplingPlan> plans;
};

struct RuleTable {
  std::string id;      // e.g. "eu-average-quantity"
  std::string name;    // for people
  std::string origin;  // file it was read from
  std::string tolerance_name = "TNE";
  std::vector<ToleranceBand> bands;  // ascending, contiguous
  // Percent-derived tolerances are rounded up to a multiple of this (1000 = 0.1 g);
  // 0 = no rounding.
  std::int64_t percent_round_up_units = 0;
  Provenance rounding_provenance;
  std::optional<int> t2_multiple;  // T2 = Qn − multiple × tolerance; nullopt = no T2
  std::vector<PackerRule> rules;
  std::vector<PlanSet> plan_sets;
  std::string caution;
};

// The band that holds `nominal_units`, or nullptr when outside the table.
// Unconfirmed bands count only when `allow_unconfirmed`.
const ToleranceBand* FindBand(const RuleTable& table, std::int64_t nominal_units,
                              bool allow_unconfirmed, bool* unconfirmed_skipped = nullptr);

// The plans of `set` that cover `lot_size` (normally zero or one).
std::vector<const SamplingPlan*> PlansForLot(const PlanSet& set, std::int64_t lot_size,
                                             bool allow_unconfirmed);

// The first packer rule of the given kind, or nullptr.
const PackerRule* FindRule(const RuleTable& table, PackerRuleKind kind);

}  // namespace heft::comply
