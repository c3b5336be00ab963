// mean_criterion.cpp — Student-t factor and the mean check.
#include "core/comply/mean_criterion.h"

#include <cmath>
#include <limits>
#include <string>

#include <boost/math/distributions/students_t.hpp>

namespace heft::comply {

double StudentTQuantile(double p, int dof) {
  if (dof < 1 || !(p > 0.0 && p < 1.0)) return std::numeric_limits<double>::quiet_NaN();
  boost::math::students_t dist(static_cast<double>(dof));
  return boost::math::quantile(dist, p);
}

double MeanCriterionFactor(int n, double quantile) {
  if (n < 2) return std::numeric_limits<double>::quiet_NaN();
  return StudentTQuantile(quantile, n - 1) / std::sqrt(static_cast<double>(n));
}

void MeanAndSd(std::span<const double> sample, double* mean, double* s) {
  double sum = 0.0;
  for (double x : sample) sum += x;
  const double m = sample.empty() ? 0.0 : sum / static_cast<double>(sample.size());
  double ss = 0.0;
  for (double x : sample) ss += (x - m) * (x - m);
  *mean = m;
  *s = sample.size() < 2 ? 0.0 : std::sqrt(ss / static_cast<double>(sample.size() - 1));
}

Status CheckMean(std::span<const double> sample, double nominal_g, double k, MeanCheck* out) {
  if (sample.empty()) return Status::Error("mean criterion: empty sample");
  if (!std::isfinite(k) || k < 0.0) return Status::Error("mean criterion: invalid factor k");
  for (std::size_t i = 0; i < sample.size(); ++i) {
    if (!std::isfinite(sample[i])) {
      return Status::Error("mean criterion: pack " + std::to_string(i + 1) +
                           " of the sample is not a finite weight");
    }
  }
  MeanCheck check;
  check.n = static_cast<int>(sample.size());
  MeanAndSd(sample, &check.mean, &check.s);
  check.k = k;
  check.limit = nominal_g - k * check.s;
  check.margin = check.mean - check.limit;
  check.pass = check.mean >= check.limit;
  *out = check;
  return Status::Ok();
}

}  // namespace heft::comply
