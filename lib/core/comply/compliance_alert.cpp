// compliance_alert.cpp — compliance warning/alarm levels from the risk figures.
#include "core/comply/compliance_alert.h"

#include <algorithm>
#include <cmath>

namespace heft::comply {

std::string_view ComplianceReasonName(ComplianceReason reason) {
  switch (reason) {
    case ComplianceReason::kMeanNearNominal:
      return "mean-near-nominal";
    case ComplianceReason::kMeanBelowNominal:
      return "mean-below-nominal";
    case ComplianceReason::kT1ShareNearLimit:
      return "t1-share-near-limit";
    case ComplianceReason::kT1ShareOverLimit:
      return "t1-share-over-limit";
    case ComplianceReason::kT2Seen:
      return "t2-seen";
  }
  return "?";
}

ComplianceAlert AssessCompliance(const LotFigures& figures, const ComplianceRisk& risk,
                                 std::optional<double> t1_share_limit,
                                 const ComplianceAlertSettings& settings) {
  ComplianceAlert alert;
  auto add = [&](ComplianceReason reason, Severity severity) {
    alert.reasons.push_back({reason, severity});
  };

  if (settings.t2_alarm && figures.t2_count > 0) add(ComplianceReason::kT2Seen, Severity::kAlarm);

  if (figures.count >= settings.min_packs) {
    const double p_mean = risk.p_lot_mean_below_nominal;
    if (p_mean >= settings.mean_alarm_probability) {
      add(ComplianceReason::kMeanBelowNominal, Severity::kAlarm);
    } else if (p_mean >= settings.mean_warn_probability) {
      add(ComplianceReason::kMeanNearNominal, Severity::kWarning);
    }

    if (t1_share_limit) {
      // P = 1 once the lot already holds more T1 packs than its final size allows.
      const double p_t1 = risk.p_t1_share_exceeds.value_or(0.0);
      const bool share_high =
          figures.count >= settings.t1_share_min_packs &&
          figures.t1_fraction >= settings.t1_warn_share_of_limit * *t1_share_limit;
      if (p_t1 >= settings.t1_alarm_probability) {
        add(ComplianceReason::kT1ShareOverLimit, Severity::kAlarm);
      } else if (share_high || p_t1 >= settings.t1_warn_probability) {
        add(ComplianceReason::kT1ShareNearLimit, Severity::kWarning);
      }
    }
  }

  std::stable_sort(alert.reasons.begin(), alert.reasons.end(),
                   [](const ComplianceAlert::Item& a, const ComplianceAlert::Item& b) {
                     return static_cast<int>(a.severity) > static_cast<int>(b.severity);
                   });
  if (!alert.reasons.empty()) alert.level = alert.reasons.front().severity;
  return alert;
}

}  // namespace heft::comply
