// lot_accumulator.h — running net-content and giveaway figures for one lot of
// one line, and the verdict under each packer's rule with its margin to failure.
//
// The accumulator only takes packs; when a lot starts and ends is decided by
// LotClock (or by an operator command) in the caller. Owned by one line's
// monitor; not thread-safe. Pure: times are passed in.
#pragma once

#include <cstdint>
#include <limits>
#include <string>
#include <string_view>
#include <vector>

#include "core/comply/net_content_limits.h"
#include "core/comply/rule_table.h"

namespace heft::comply {

// What a pack is to the lot. The monitor decides gross packs (outside its
// gross band) and maps the checkweigher's status.
enum class PackRole : std::uint8_t {
  kInLot,     // a normal pack that stays in the lot
  kRejected,  // pushed off the line by the checkweigher (weighed)
  kGross,     // gross pack (empty, double, mis-read): counted, never in the figures
  kError,     // weighing error: counted, weight not trusted
};

struct LotSettings {
  double cost_per_kg = 0.0;  // product cost, any currency, for giveaway money
  // Rejected packs leave the line, so by default they are not part of the lot
  // that ships; set true where rejects are returned into the lot.
  bool rejects_in_lot = false;
};

struct LotFigures {
  std::int64_t count = 0;  // packs in the lot figures
  std::int64_t rejected = 0;
  std::int64_t gross = 0;
  std::int64_t errors = 0;
  std::int64_t invalid = 0;  // non-finite weights refused
  std::int64_t seen = 0;     // every Add() call
  double mean_g = 0.0;
  double s_g = 0.0;                 // sample SD (n − 1)
  double short_term_sigma_g = 0.0;  // mean moving range / 1.128 (check-values.md §2)
  double min_g = 0.0;
  double max_g = 0.0;
  std::int64_t t1_count = 0;  // below T1
  double t1_fraction = 0.0;
  std::int64_t t2_count = 0;  // below T2 (0 if the table has no T2)
  std::int64_t below_nominal = 0;
  std::int64_t rejected_below_t1 = 0;  // rejects that were T1 (the checkweigher did its job)
  double giveaway_g = 0.0;  // Σ(x − Qn) = (mean − Qn) × count; negative = underfill
  double giveaway_per_pack_g = 0.0;
  double giveaway_money = 0.0;  // giveaway_g / 1000 × cost_per_kg
  std::int64_t first_time_ms = 0, last_time_ms = 0;
  std::int64_t first_index = 0, last_index = 0;
};

enum class VerdictState : std::uint8_t { kPass, kFail, kNotEvaluated };
std::string_view VerdictStateName(VerdictState state);  // "pass", "fail", "not-evaluated"

struct RuleVerdict {
  std::string rule_id;
  PackerRuleKind kind = PackerRuleKind::kMeanNotBelowNominal;
  VerdictState state = VerdictState::kNotEvaluated;
  // Distance to failure: ≥ 0 while passing. Grams for the mean and the
  // no-pack-below rules (mean − Qn; lightest pack − limit); for the T1 share,
  // packs that could still fall below T1 (floor(limit × count) − T1 count).
  double margin = 0.0;
  std::string_view margin_unit;  // "g" or "packs"
  std::string note;              // why not evaluated, or the figures in words
};

class LotAccumulator {
 public:
  LotAccumulator(const NetContentLimits& limits, const LotSettings& settings);

  // Adds one pack. Non-finite weights are counted as invalid and ignored.
  void Add(double grams, PackRole role, std::int64_t time_ms, std::int64_t index);
  void Reset();  // empty lot, same limits and settings

  LotFigures Figures() const;
  // Verdict for every packer's rule of `table`. Rules marked unconfirmed are
  // not evaluated unless `allow_unconfirmed`.
  std::vector<RuleVerdict> Verdicts(const RuleTable& table, bool allow_unconfirmed) const;

  const NetContentLimits& limits() const { return limits_; }
  std::int64_t count() const { return count_; }

  // Everything the accumulator has taken in, as plain values, so an open lot
  // can be saved (heftd's restart checkpoint) and continued: Restore() of a
  // Checkpoint() then the same Add()s gives the same figures as no break.
  // Limits and settings are not part of it (they come from the config).
  struct Checkpoint {
    std::int64_t count = 0, rejected = 0, gross = 0, errors = 0, invalid = 0, seen = 0;
    double reference = 0.0, mean_dev = 0.0, m2 = 0.0, sum_mr = 0.0, last = 0.0;
    double min = std::numeric_limits<double>::infinity();
    double max = -std::numeric_limits<double>::infinity();
    std::int64_t t1 = 0, t2 = 0, below_nominal = 0, rejected_below_t1 = 0;
    std::int64_t first_time_ms = 0, last_time_ms = 0, first_index = 0, last_index = 0;
    bool any = false;
  };
  Checkpoint Save() const;
  void Restore(const Checkpoint& checkpoint);

 private:
  NetContentLimits limits_;
  LotSettings settings_;
  std::int64_t count_ = 0, rejected_ = 0, gross_ = 0, errors_ = 0, invalid_ = 0, seen_ = 0;
  // Welford about a reference value so large weights with small spread keep precision.
  double reference_ = 0.0;
  double mean_dev_ = 0.0;  // running mean of (x − reference)
  double m2_ = 0.0;
  double sum_mr_ = 0.0;
  double last_ = 0.0;
  double min_ = std::numeric_limits<double>::infinity();
  double max_ = -std::numeric_limits<double>::infinity();
  std::int64_t t1_ = 0, t2_ = 0, below_nominal_ = 0, rejected_below_t1_ = 0;
  std::int64_t first_time_ms_ = 0, last_time_ms_ = 0, first_index_ = 0, last_index_ = 0;
  bool any_ = false;  // any pack seen (for times and indexes)
};

}  // namespace heft::comply
