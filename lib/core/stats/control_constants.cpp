#include "core/stats/control_constants.h"

#include <array>
#include <cmath>
#include <vector>

namespace heft {
namespace {

using Table = std::array<ControlConstants, kMaxSubgroup + 1>;

Table ComputeTable() {
  // Grid: x in [−kSpan, kSpan] with step kStep; φ(9) ≈ 1e−18, so truncation is negligible,
  // and a step of 0.02 leaves trapezoidal errors far below 1e−9 here.
  constexpr double kSpan = 9.0;
  constexpr double kStep = 0.02;
  const int points = static_cast<int>(2.0 * kSpan / kStep + 0.5) + 1;
  std::vector<double> cdf(points), upper(points), pdf(points);
  const double inv_sqrt2 = 1.0 / std::sqrt(2.0);
  const double inv_sqrt_2pi = 1.0 / std::sqrt(2.0 * M_PI);
  for (int i = 0; i < points; ++i) {
    const double x = -kSpan + kStep * i;
    cdf[i] = 0.5 * std::erfc(-x * inv_sqrt2);
    upper[i] = 0.5 * std::erfc(x * inv_sqrt2);  // 1 − Φ(x) without cancellation
    pdf[i] = inv_sqrt_2pi * std::exp(-0.5 * x * x);
  }
  std::array<double, kMaxSubgroup + 1> d2{}, ew2{};
  // d2: end points are zero to double precision, so plain sums are the trapezoidal rule.
  for (int i = 0; i < points; ++i) {
    double pc = cdf[i], pu = upper[i];
    for (int n = 2; n <= kMaxSubgroup; ++n) {
      pc *= cdf[i];
      pu *= upper[i];
      d2[n] += (1.0 - pc - pu) * kStep;
    }
  }
  // E[W²]: for every grid pair (x, x + w), add w² φ(x) φ(x+w) b^(n−2) for all n at once.
  // The w = 0 column gets the trapezoidal half weight (it is zero anyway because of w²).
  for (int j = 1; j < points; ++j) {
    const double w = kStep * j;
    const double w2 = w * w * kStep * kStep;  // both integration steps folded in
    for (int i = 0; i + j < points; ++i) {
      const double base = cdf[i + j] - cdf[i];
      double term = w2 * pdf[i] * pdf[i + j];
      for (int n = 2; n <= kMaxSubgroup; ++n) {
        ew2[n] += term * n * (n - 1);
        term *= base;
      }
    }
  }
  Table table{};
  for (int n = kMinSubgroup; n <= kMaxSubgroup; ++n) {
    table[n].n = n;
    table[n].d2 = d2[n];
    table[n].d3 = std::sqrt(ew2[n] - d2[n] * d2[n]);
    table[n].c4 = C4(n);
  }
  return table;
}

}  // namespace

double C4(int n) {
  if (n < 2) return 0.0;
  const double nd = static_cast<double>(n);
  return std::sqrt(2.0 / (nd - 1.0)) *
         std::exp(std::lgamma(nd / 2.0) - std::lgamma((nd - 1.0) / 2.0));
}

ControlConstants ControlConstantsFor(int n) {
  static const Table table = ComputeTable();
  if (n < kMinSubgroup || n > kMaxSubgroup) return ControlConstants{};
  return table[n];
}

}  // namespace heft
