#include "core/detect/ewma_chart.h"

#include <cmath>
#include <vector>

namespace heft {
namespace {
double Phi(double x) { return 0.5 * std::erfc(-x / std::sqrt(2.0)); }
}  // namespace

double EwmaChart::HalfWidth() const { return limit_l_ * std::sqrt(lambda_ / (2.0 - lambda_)); }

EwmaChart::Signal EwmaChart::Update(double x, double allowance) {
  value_ += lambda_ * (x - value_);
  ++steps_;
  const double w = HalfWidth() + allowance;
  if (value_ > w) return Signal::kUp;
  if (value_ < -w) return Signal::kDown;
  return Signal::kNone;
}

double EwmaChart::LimitFactor(double lambda, double limit_l, int i) {
  const double decay = std::pow(1.0 - lambda, 2.0 * i);
  return limit_l * std::sqrt(lambda / (2.0 - lambda) * (1.0 - decay));
}

double EwmaChart::Arl(double lambda, double limit_l, double delta, int cells) {
  if (cells < 3) cells = 3;
  if (cells % 2 == 0) ++cells;
  const int m = cells;
  const double h = limit_l * std::sqrt(lambda / (2.0 - lambda));
  const double w = 2.0 * h / m;
  // A = I − Q (row-major), solve A·arl = 1 by Gaussian elimination with partial pivoting.
  std::vector<double> a(static_cast<std::size_t>(m) * m);
  std::vector<double> b(static_cast<std::size_t>(m), 1.0);
  for (int i = 0; i < m; ++i) {
    const double ci = -h + (i + 0.5) * w;
    for (int j = 0; j < m; ++j) {
      const double lo = -h + j * w;
      const double hi = lo + w;
      // P(lo < (1−λ)cᵢ + λX < hi), X ~ N(delta, 1).
      const double p = Phi((hi - (1.0 - lambda) * ci) / lambda - delta) -
                       Phi((lo - (1.0 - lambda) * ci) / lambda - delta);
      a[static_cast<std::size_t>(i) * m + j] = (i == j ? 1.0 : 0.0) - p;
    }
  }
  for (int col = 0; col < m; ++col) {
    int pivot = col;
    for (int r = col + 1; r < m; ++r) {
      if (std::fabs(a[static_cast<std::size_t>(r) * m + col]) >
          std::fabs(a[static_cast<std::size_t>(pivot) * m + col])) {
        pivot = r;
      }
    }
    if (pivot != col) {
      for (int c = 0; c < m; ++c) {
        std::swap(a[static_cast<std::size_t>(col) * m + c],
                  a[static_cast<std::size_t>(pivot) * m + c]);
      }
      std::swap(b[col], b[pivot]);
    }
    const double d = a[static_cast<std::size_t>(col) * m + col];
    for (int r = col + 1; r < m; ++r) {
      const double f = a[static_cast<std::size_t>(r) * m + col] / d;
      if (f == 0.0) continue;
      for (int c = col; c < m; ++c) {
        a[static_cast<std::size_t>(r) * m + c] -= f * a[static_cast<std::size_t>(col) * m + c];
      }
      b[r] -= f * b[col];
    }
  }
  for (int r = m - 1; r >= 0; --r) {
    double s = b[r];
    for (int c = r + 1; c < m; ++c) s -= a[static_cast<std::size_t>(r) * m + c] * b[c];
    b[r] = s / a[static_cast<std::size_t>(r) * m + r];
  }
  return b[m / 2];  // the middle cell holds 0: zero-state start
}

double EwmaChart::LimitForArl(double lambda, double arl0, int cells) {
  double lo = 0.5, hi = 8.0;
  for (int i = 0; i < 40; ++i) {  // ARL grows with L
    const double mid = 0.5 * (lo + hi);
    if (Arl(lambda, mid, 0.0, cells) < arl0)
      lo = mid;
    else
      hi = mid;
  }
  return hi;
}

}  // namespace heft
