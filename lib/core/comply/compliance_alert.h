// compliance_alert.h — whether a lot's running figures call for a
// `compliance` warning or alarm, and why.
//
// Returns values only; the line monitor turns level changes into raised and
// cleared findings (FindingKind::kCompliance) and applies its own hold-off.
// Thresholds are our defaults, not from any regulation. Pure; thread-safe.
#pragma once

#include <cstdint>
#include <optional>
#include <string_view>
#include <vector>

#include "core/comply/compliance_risk.h"
#include "core/comply/lot_accumulator.h"
#include "core/model/finding.h"

namespace heft::comply {

struct ComplianceAlertSettings {
  // Mean and T1-share reasons wait for this many packs (a lot's first few packs
  // say little); a T2 pack counts at once.
  std::int64_t min_packs = 30;
  double mean_warn_probability = 0.05;  // P(final lot mean < Qn) for a warning
  double mean_alarm_probability = 0.5;  // ... for an alarm (running mean at/below Qn)
  // Observed T1 share at or above this multiple of the limit: warning, once the lot
  // has t1_share_min_packs packs. 1.0 because early T1 packs are noisy (3 in 200 at a
  // true 0.4 % happens 1 lot in 20); the model-based probabilities below warn earlier.
  double t1_warn_share_of_limit = 1.0;
  std::int64_t t1_share_min_packs = 200;
  double t1_warn_probability = 0.05;  // P(T1 share ends above the limit) for a warning
  double t1_alarm_probability = 0.5;  // ... for an alarm
  bool t2_alarm = true;               // any T2 pack raises an alarm
};

enum class ComplianceReason : std::uint8_t {
  kMeanNearNominal,   // warning: the lot mean may end below nominal
  kMeanBelowNominal,  // alarm
  kT1ShareNearLimit,  // warning
  kT1ShareOverLimit,  // alarm: the lot's T1 share is likely to end above the limit
  kT2Seen,            // alarm
};
std::string_view ComplianceReasonName(ComplianceReason reason);  // e.g. "t2-seen"

struct ComplianceAlert {
  std::optional<Severity> level;  // nullopt: nothing to report
  struct Item {
    ComplianceReason reason;
    Severity severity;
  };
  std::vector<Item> reasons;  // every reason that holds, most severe first
};

// `t1_share_limit`: the table's T1-share limit, if it has one.
ComplianceAlert AssessCompliance(const LotFigures& figures, const ComplianceRisk& risk,
                                 std::optional<double> t1_share_limit,
                                 const ComplianceAlertSettings& settings);

}  // namespace heft::comply
