#include "core/detect/detector_design.h"

#include <algorithm>
#include <cmath>

#include <boost/math/distributions/normal.hpp>

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
    if (SiegmundTwoSidedArl(k, mid, 0.0) < arl0) lo = mid; else hi = mid;
  }
  return hi;
}

double IndividualsLimit(double arl0) {
  const double p = std::clamp(1.0 / (2.0 * arl0), 1e-15, 0.25);
  return boost::math::quantile(boost::math::complement(boost::math::normal(), p));
}

DetectorDesign DesignDetectors(double false_alarms_per_day, double packs_per_minute,
                               double min_shift_sigma) {
  DetectorDesign d;
  const double packs_per_day = std::max(1.0, packs_per_minute) * 60.0 * 24.0;
  d.arl0_packs = packs_per_day / std::max(1e-6, false_alarms_per_day);
  d.cusum_k = std::max(0.05, min_shift_sigma / 2.0);
  d.cusum_h = CusumDecisionInterval(d.cusum_k, 2.0 * d.arl0_packs);
  d.cusum_arl0 = SiegmundTwoSidedArl(d.cusum_k, d.cusum_h, 0.0);
  d.cusum_delay_packs = SiegmundTwoSidedArl(d.cusum_k, d.cusum_h, min_shift_sigma);
  d.individuals_limit = IndividualsLimit(4.0 * d.arl0_packs);
  return d;
}

}  // namespace heft
