#include "core/detect/log_variance_cusum.h"

#include <algorithm>
#include <cmath>

#include <boost/math/special_functions/digamma.hpp>
#include <boost/math/special_functions/trigamma.hpp>

namespace heft {

LogVarianceCusum::LogVarianceCusum(int subgroup, double k, double h, double variance_ratio)
    : n_(std::max(2, subgroup)), k_(k), h_(h) {
  const double half_nu = 0.5 * (n_ - 1);
  mean_ =
      boost::math::digamma(half_nu) - std::log(half_nu) + std::log(std::max(1e-6, variance_ratio));
  sd_ = std::sqrt(boost::math::trigamma(half_nu));
}

double LogVarianceCusum::ExpectedVarianceRatio(int n, double phi) {
  if (n < 2) return 1.0;
  double s = 0.0, pk = 1.0;
  for (int k = 1; k < n; ++k) {
    pk *= phi;
    s += (n - k) * pk;
  }
  return 1.0 - 2.0 / (static_cast<double>(n) * (n - 1)) * s;
}

void LogVarianceCusum::Reset() {
  sum_ = 0.0;
  count_ = 0;
  s1_ = s2_ = 0.0;
  smoothed_log_ = 0.0;
  last_ratio_ = 1.0;
}

bool LogVarianceCusum::Add(double z) {
  s1_ += z;
  s2_ += z * z;
  if (++count_ < n_) return false;
  const double var = std::max(1e-12, (s2_ - s1_ * s1_ / n_) / (n_ - 1));
  count_ = 0;
  s1_ = s2_ = 0.0;
  last_ratio_ = std::sqrt(var);
  const double u = (std::log(var) - mean_) / sd_;
  smoothed_log_ += 0.2 * (u - smoothed_log_);
  sum_ = std::max(0.0, sum_ + u - k_);
  return sum_ > h_;
}

}  // namespace heft
