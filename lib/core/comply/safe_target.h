// safe_target.h — the lowest safe target fill: the smallest mean weight that
// still meets every packer's rule of a table with a stated confidence, given
// the pack spread, and the giveaway saved (or needed) against the current mean.
//
// Normal model, σ treated as known (use the lot's overall SD, which includes
// head-to-head and drift spread, not the short-term sigma):
//  * mean rule:      μ ≥ Qn + margin + z(confidence)·σ/√(lot packs)
//                    (the lot mean of that many packs stays ≥ Qn with that confidence)
//  * T1-share rule:  Φ((T1 − μ)/σ) ≤ share_of_limit × limit  →  μ ≥ T1 + z(1 − p1)·σ
//  * no pack < T2 (and no pack < T1 where that rule applies):
//                    Φ((T − μ)/σ) ≤ tail_probability  →  μ ≥ T + z(1 − p)·σ
// Advisory only: heft never adjusts the filler. Pure; thread-safe.
#pragma once

#include <string>
#include <string_view>

#include "core/comply/net_content_limits.h"
#include "core/comply/rule_table.h"
#include "core/model/status.h"

namespace heft::comply {

struct SafeTargetSettings {
  double t1_share_of_limit = 0.5;  // aim for half the T1-share limit (margin; our default)
  double tail_probability = 1e-4;  // per-pack P(below T2), 1 in 10,000
  double mean_confidence = 0.99;   // P(lot mean ≥ Qn + margin)
  std::int64_t lot_packs = 3600;   // packs per lot for the mean rule
  double mean_margin_g = 0.0;      // extra grams above nominal, if the plant wants one
  double hours_per_year = 2000.0;  // running hours for the yearly figure (8 h × 250 days)
  bool allow_unconfirmed = false;  // use rules marked unconfirmed in the table
};

struct SafeTargetInput {
  double sigma_g = 0.0;         // pack spread
  double current_mean_g = 0.0;  // where the line runs now
  double packs_per_hour = 0.0;  // observed rate
  double cost_per_kg = 0.0;     // product cost; 0 = no money figures
};

struct SafeTarget {
  double target_g = 0.0;
  std::string_view binding_rule;  // id of the rule that sets the target (points into the RuleTable)
  // The target each rule alone would need (NaN where the table lacks the rule).
  double for_mean_g = 0.0;
  double for_t1_share_g = 0.0;
  double for_t2_g = 0.0;
  double for_no_t1_g = 0.0;
  double t1_share_aimed = 0.0;        // the per-pack T1 probability aimed for
  double giveaway_now_g = 0.0;        // per pack: current mean − Qn
  double giveaway_at_target_g = 0.0;  // per pack: target − Qn
  double saving_per_pack_g = 0.0;     // current − target; negative = the fill must go up
  double saving_per_hour_g = 0.0;
  double saving_per_year_kg = 0.0;
  double saving_per_hour_money = 0.0;
  double saving_per_year_money = 0.0;
  bool raise_needed = false;  // the line runs below the safe target
};

// Fails on a non-finite or negative σ, a non-finite mean or rate, or settings
// out of range (probabilities outside (0, 1), lot_packs < 1).
Status ComputeSafeTarget(const RuleTable& table, const NetContentLimits& limits,
                         const SafeTargetInput& input, const SafeTargetSettings& settings,
                         SafeTarget* out);

// Plain advisory text for operators and reports (several sentences).
std::string DescribeSafeTarget(const SafeTarget& target, const SafeTargetInput& input,
                               const SafeTargetSettings& settings);

}  // namespace heft::comply
