#include "core/detect/detector_design.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <span>
#include <string>

#include <boost/math/distributions/normal.hpp>

#include "core/design/arl_design.h"
#include "core/design/cusum_arl.h"
#include "core/design/shewhart_arl.h"

namespace heft {

double SiegmundOneSidedArl(double k, double h, double delta) {
  const double d = delta - k;
  const double b = h + 1.166;
  if (std::fabs(d) < 1e-9) return b * b;
  return (std::exp(-2.0 * d * b) + 2.0 * d * b - 1.0) / (2.0 * d * d);
}

double SiegmundTwoSidedArl(double k, double h, double delta) {
  const double up = SiegmundOneSidedArl(k, h, delta);
  const double down = SiegmundOneSidedArl(k, h, -delta);
  return 1.0 / (1.0 / up + 1.0 / down);
}

double CusumDecisionInterval(double k, double arl0) {
  double lo = 0.1, hi = 60.0;
  for (int i = 0; i < 200; ++i) {  // ARL is increasing in h: bisection
    const double mid = 0.5 * (lo + hi);
    if (SiegmundTwoSidedArl(k, mid, 0.0) < arl0)
      lo = mid;
    else
      hi = mid;
  }
  return hi;
}

double IndividualsLimit(double arl0) {
  const double p = std::clamp(1.0 / (2.0 * arl0), 1e-15, 0.25);
  return boost::math::quantile(boost::math::complement(boost::math::normal(), p));
}

namespace {

std::string G(double v) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%g", v);
  return buffer;
}

}  // namespace

Status DesignLineDetectors(const DesignTargets& targets, DetectorDesign* out) {
  if (!std::isfinite(targets.packs_per_minute) || targets.packs_per_minute <= 0.0) {
    return Status::Error("design: pack rate " + G(targets.packs_per_minute) +
                         " packs/min must be above 0");
  }
  if (!std::isfinite(targets.false_alarms_per_day) || targets.false_alarms_per_day <= 0.0) {
    return Status::Error("design: false alarms per day " + G(targets.false_alarms_per_day) +
                         " must be above 0");
  }
  if (!std::isfinite(targets.min_shift_sigma) || targets.min_shift_sigma <= 0.0 ||
      targets.min_shift_sigma > 10.0) {
    return Status::Error("design: shift to detect " + G(targets.min_shift_sigma) +
                         " sigma must be above 0 and at most 10");
  }
  DetectorDesign d;
  const double packs_per_day = targets.packs_per_minute * 60.0 * 24.0;
  d.arl0_packs = packs_per_day / targets.false_alarms_per_day;
  d.min_shift_sigma = targets.min_shift_sigma;

  CusumDesign cusum;
  if (Status s = DesignCusum(d.arl0_packs / kCusumBudgetShare, d.min_shift_sigma, 0.5, &cusum);
      !s.ok()) {
    return Status::Error("design: CUSUM: " + s.message());
  }
  d.cusum_k = cusum.k;
  d.cusum_h = cusum.h;
  d.cusum_arl0 = cusum.arl0;
  d.cusum_delay_packs = cusum.delay_zero_state;
  d.cusum_head_start = cusum.head_start;
  d.cusum_arl0_fir = cusum.arl0_fir;
  d.cusum_delay_fir_packs = cusum.delay_fir;
  d.cusum_delay_steady_packs = cusum.delay_steady_state;

  d.individuals_arl0 = d.arl0_packs / kIndividualsBudgetShare;
  d.individuals_limit = IndividualsLimit(d.individuals_arl0);
  d.individuals_delay_packs = ShewhartArl(d.individuals_limit, d.min_shift_sigma);

  if (!std::isfinite(targets.drift_sigma_per_pack) || targets.drift_sigma_per_pack <= 0.0 ||
      targets.drift_sigma_per_pack > 1.0) {
    return Status::Error("design: drift " + G(targets.drift_sigma_per_pack) +
                         " sigma per pack must be in (0, 1]");
  }
  EwmaDesign ewma;
  d.ewma_shift_sigma = d.min_shift_sigma / 2.0;
  d.drift_sigma_per_pack = targets.drift_sigma_per_pack;
  const double ewma_target = d.arl0_packs / kEwmaBudgetShare;
  const double one_lambda[] = {targets.ewma_lambda};
  const Status s =
      DesignEwmaForRamp(ewma_target, d.drift_sigma_per_pack, d.ewma_shift_sigma,
                        targets.ewma_lambda > 0.0 ? std::span<const double>(one_lambda)
                                                  : std::span<const double>(kDriftLambdaGrid),
                        &ewma);
  if (!s.ok()) return Status::Error("design: EWMA: " + s.message());
  d.ewma_lambda = ewma.lambda;
  d.ewma_limit = ewma.limit;
  d.ewma_arl0 = ewma.arl0;
  d.ewma_delay_packs = ewma.delay_zero_state;
  d.ewma_delay_steady_packs = ewma.delay_steady_state;
  d.ewma_ramp_delay_packs = ewma.ramp_delay_steady_state;
  d.cusum_ramp_delay_packs =
      CusumOneSidedRampArl(d.cusum_k, d.cusum_h, d.drift_sigma_per_pack, true);
  *out = d;
  return Status::Ok();
}

namespace {
// DesignDetectors' inputs clamped to sane ranges.
DesignTargets ClampedTargets(double false_alarms_per_day, double packs_per_minute,
                             double min_shift_sigma) {
  DesignTargets targets;
  targets.packs_per_minute =
      std::isfinite(packs_per_minute) ? std::max(1.0, packs_per_minute) : 1.0;
  targets.false_alarms_per_day =
      std::isfinite(false_alarms_per_day) ? std::max(1e-3, false_alarms_per_day) : 1.0;
  targets.min_shift_sigma =
      std::isfinite(min_shift_sigma) ? std::clamp(min_shift_sigma, 0.1, 5.0) : 1.0;
  return targets;
}
}  // namespace

LineBudget DesignLineBudget(double false_alarms_per_day, double packs_per_minute,
                            double min_shift_sigma) {
  const DesignTargets targets =
      ClampedTargets(false_alarms_per_day, packs_per_minute, min_shift_sigma);
  LineBudget b;
  b.arl0_packs = targets.packs_per_minute * 60.0 * 24.0 / targets.false_alarms_per_day;
  b.individuals_limit = IndividualsLimit(b.arl0_packs / kIndividualsBudgetShare);
  return b;
}

ShiftCusumDesign DesignShiftCusum(double false_alarms_per_day, double packs_per_minute,
                                  double min_shift_sigma) {
  const DesignTargets targets =
      ClampedTargets(false_alarms_per_day, packs_per_minute, min_shift_sigma);
  const double arl0 = targets.packs_per_minute * 60.0 * 24.0 / targets.false_alarms_per_day;
  // Only k and h are needed here: DesignCusum's run lengths for the report would
  // cost five more solves of the ARL integral equation.
  const double k_design = targets.min_shift_sigma / 2.0;
  double h = 0.0;
  if (CusumDecisionIntervalForArl(k_design, arl0 / kCusumBudgetShare, &h).ok()) {
    return {k_design, h};
  }
  const double k = std::max(0.05, targets.min_shift_sigma / 2.0);  // as DesignDetectors' fallback
  return {k, CusumDecisionInterval(k, arl0 / kCusumBudgetShare)};
}

DetectorDesign DesignDetectors(double false_alarms_per_day, double packs_per_minute,
                               double min_shift_sigma) {
  const DesignTargets targets =
      ClampedTargets(false_alarms_per_day, packs_per_minute, min_shift_sigma);
  DetectorDesign d;
  if (DesignLineDetectors(targets, &d).ok()) return d;
  // Fallback (not expected after clamping): the Siegmund design of old.
  d = DetectorDesign{};
  d.exact = false;
  d.arl0_packs = targets.packs_per_minute * 60.0 * 24.0 / targets.false_alarms_per_day;
  d.min_shift_sigma = targets.min_shift_sigma;
  d.cusum_k = std::max(0.05, targets.min_shift_sigma / 2.0);
  d.cusum_h = CusumDecisionInterval(d.cusum_k, d.arl0_packs / kCusumBudgetShare);
  d.cusum_arl0 = SiegmundTwoSidedArl(d.cusum_k, d.cusum_h, 0.0);
  d.cusum_delay_packs = SiegmundTwoSidedArl(d.cusum_k, d.cusum_h, targets.min_shift_sigma);
  d.cusum_head_start = d.cusum_h / 2.0;
  d.individuals_arl0 = d.arl0_packs / kIndividualsBudgetShare;
  d.individuals_limit = IndividualsLimit(d.individuals_arl0);
  return d;
}

}  // namespace heft
