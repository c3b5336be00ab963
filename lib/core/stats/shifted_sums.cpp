#include "core/stats/shifted_sums.h"

#include <cmath>
#include <limits>

#include "core/stats/moments.h"

namespace heft {

double ShiftedSums::Mean(std::size_t n) const {
  return n == 0 ? 0.0 : reference_ + s1_ / static_cast<double>(n);
}

void ShiftedSums::Central(std::size_t count, double* m2, double* m3, double* m4) const {
  const double n = static_cast<double>(count);
  const double a = s1_ / n;
  const double r2 = s2_ / n;
  const double r3 = s3_ / n;
  const double r4 = s4_ / n;
  const double a2 = a * a;
  *m2 = r2 - a2;
  *m3 = r3 - 3.0 * a * r2 + 2.0 * a2 * a;
  *m4 = r4 - 4.0 * a * r3 + 6.0 * a2 * r2 - 3.0 * a2 * a2;
  // If the spread is below the rounding left in r2, it is zero (e.g. a window of equal
  // values that was not summed about one of them).
  if (*m2 <= 64.0 * std::numeric_limits<double>::epsilon() * r2) *m2 = 0.0;
}

double ShiftedSums::Variance(std::size_t n) const {
  if (n < 2) return 0.0;
  double m2, m3, m4;
  Central(n, &m2, &m3, &m4);
  return m2 > 0.0 ? m2 * static_cast<double>(n) / static_cast<double>(n - 1) : 0.0;
}

std::optional<double> ShiftedSums::Skewness(std::size_t n) const {
  if (n < 3) return std::nullopt;
  double m2, m3, m4;
  Central(n, &m2, &m3, &m4);
  return SampleSkewness(static_cast<double>(n), m2, m3);
}

std::optional<double> ShiftedSums::ExcessKurtosis(std::size_t n) const {
  if (n < 4) return std::nullopt;
  double m2, m3, m4;
  Central(n, &m2, &m3, &m4);
  return SampleExcessKurtosis(static_cast<double>(n), m2, m4);
}

}  // namespace heft
