#include "core/detect/ewma_chart.h"

#include <cmath>
#include <vector>

#include "core/design/illinois_root.h"

namespace heft {
namespace {
double Phi(double x) { return 0.5 * std::erfc(-x / std::sqrt(2.0)); }
}  // namespace

double EwmaChart::AsymptoticHalfWidth(double lambda, double limit_l) {
  return limit_l * std::sqrt(lambda / (2.0 - lambda));
}

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
  // Each row's cells share their edges: one normal CDF per edge, not two per cell.
  std::vector<double> edge_cdf(static_cast<std::size_t>(m) + 1);
  for (int i = 0; i < m; ++i) {
    const double ci = -h + (i + 0.5) * w;
    for (int j = 0; j <= m; ++j) {
      // P((1−λ)cᵢ + λX < edge j), X ~ N(delta, 1).
      edge_cdf[static_cast<std::size_t>(j)] =
          Phi((-h + j * w - (1.0 - lambda) * ci) / lambda - delta);
    }
    for (int j = 0; j < m; ++j) {
      const double p =
          edge_cdf[static_cast<std::size_t>(j) + 1] - edge_cdf[static_cast<std::size_t>(j)];
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
  // ln ARL is smooth and nearly quadratic in L: the Illinois method needs a dozen
  // chain solves where bisection over [0.5, 8] to the same 1e-9 needed forty.
  auto gap = [&](double limit) { return LogArlGap(Arl(lambda, limit, 0.0, cells), arl0); };
  const double lo = 0.5, hi = 8.0;
  const double f_lo = gap(lo), f_hi = gap(hi);
  if (!(f_lo < 0.0)) return lo;
  if (!(f_hi > 0.0)) return hi;
  return IllinoisRoot(gap, lo, f_lo, hi, f_hi, 1e-9);
}

}  // namespace heft
