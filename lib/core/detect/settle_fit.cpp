#include "core/detect/settle_fit.h"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <vector>

#include "core/detect/mser.h"

namespace heft {
namespace {

// Solves the symmetric 3×3 (or 2×2 when dim = 2) system a·x = b by Gaussian elimination;
// false when singular.
bool Solve(int dim, double a[3][3], double b[3], double x[3]) {
  for (int c = 0; c < dim; ++c) {
    int p = c;
    for (int r = c + 1; r < dim; ++r)
      if (std::fabs(a[r][c]) > std::fabs(a[p][c])) p = r;
    if (std::fabs(a[p][c]) < 1e-12) return false;
    if (p != c) {
      for (int k = 0; k < dim; ++k) std::swap(a[c][k], a[p][k]);
      std::swap(b[c], b[p]);
    }
    for (int r = c + 1; r < dim; ++r) {
      const double f = a[r][c] / a[c][c];
      for (int k = c; k < dim; ++k) a[r][k] -= f * a[c][k];
      b[r] -= f * b[c];
    }
  }
  for (int r = dim - 1; r >= 0; --r) {
    double s = b[r];
    for (int k = r + 1; k < dim; ++k) s -= a[r][k] * x[k];
    x[r] = s / a[r][r];
  }
  return true;
}

}  // namespace

SettleEstimate EstimateSettling(std::span<const double> series, std::size_t min_after) {
  SettleEstimate e;
  const std::size_t n = series.size();
  if (n < 20) return e;
  const MserResult mser = MserBatched(series, 5);
  e.mser_cut = mser.truncate;

  // Centre on the tail mean for accuracy; sums over the whole series.
  double ref = 0.0;
  for (std::size_t i = n / 2; i < n; ++i) ref += series[i];
  ref /= static_cast<double>(n - n / 2);
  std::vector<double> y(n);
  double sy = 0.0, syy = 0.0;
  for (std::size_t i = 0; i < n; ++i) {
    y[i] = series[i] - ref;
    sy += y[i];
    syy += y[i] * y[i];
  }
  const double dn = static_cast<double>(n);
  const double sse_none = std::max(1e-300, syy - sy * sy / dn);
  const double bic_none = dn * std::log(sse_none / dn) + 1.0 * std::log(dn);
  double best_bic = bic_none;
  double level = sy / dn;

  // First order: for each τ, x = L + A·rᵗ with r = e^{−1/τ}; 2×2 normal equations.
  const double max_tau = dn / 2.0;
  for (double tau = 1.0; tau <= max_tau; tau *= 1.04) {
    const double r = std::exp(-1.0 / tau);
    double se = 0.0, see = 0.0, sye = 0.0, f = 1.0;
    for (std::size_t i = 0; i < n; ++i) {
      se += f;
      see += f * f;
      sye += y[i] * f;
      f *= r;
      if (f < 1e-12) break;  // the rest adds nothing
    }
    double a[3][3] = {{dn, se, 0}, {se, see, 0}, {0, 0, 0}};
    double b[3] = {sy, sye, 0};
    double x[3] = {0, 0, 0};
    if (!Solve(2, a, b, x)) continue;
    const double sse = std::max(1e-300, syy - (x[0] * sy + x[1] * sye));
    const double bic = dn * std::log(sse / dn) + 3.0 * std::log(dn);
    if (bic < best_bic) {
      best_bic = bic;
      e.model = SettleModel::kFirstOrder;
      e.tau = tau;
      e.amplitude = x[1];
      e.period = 0.0;
      level = x[0];
    }
  }
  // Under-damped: x = L + e^{−αt}(a cos ωt + b sin ωt); 3×3 normal equations per (α, ω).
  for (double tau = 2.0; tau <= max_tau; tau *= 1.08) {
    const double decay = std::exp(-1.0 / tau);
    for (double period = 6.0; period <= std::min(dn / 2.0, 8.0 * tau); period *= 1.05) {
      const double w = 2.0 * std::numbers::pi / period;
      const double cw = std::cos(w), sw = std::sin(w);
      double sc = 0, ss = 0, scc = 0, sss = 0, scs = 0, syc = 0, sys = 0;
      double env = 1.0, c = 1.0, s = 0.0;
      for (std::size_t i = 0; i < n; ++i) {
        const double bc = env * c, bs = env * s;
        sc += bc;
        ss += bs;
        scc += bc * bc;
        sss += bs * bs;
        scs += bc * bs;
        syc += y[i] * bc;
        sys += y[i] * bs;
        const double nc = c * cw - s * sw;
        s = s * cw + c * sw;
        c = nc;
        env *= decay;
        if (env < 1e-12) break;
      }
      double a[3][3] = {{dn, sc, ss}, {sc, scc, scs}, {ss, scs, sss}};
      double b[3] = {sy, syc, sys};
      double x[3] = {0, 0, 0};
      if (!Solve(3, a, b, x)) continue;
      const double sse = std::max(1e-300, syy - (x[0] * sy + x[1] * syc + x[2] * sys));
      const double bic = dn * std::log(sse / dn) + 5.0 * std::log(dn);
      if (bic < best_bic) {
        best_bic = bic;
        e.model = SettleModel::kUnderdamped;
        e.tau = tau;
        e.period = period;
        e.amplitude = std::hypot(x[1], x[2]);
        level = x[0];
      }
    }
  }
  e.level = level + ref;
  if (e.model == SettleModel::kNone) {
    e.settle_at = mser.truncate;
    e.settled = !mser.at_search_limit && n >= e.settle_at + min_after;
  } else {
    // 2 % settling time: 4τ (first order) or 4/(ζωₙ) = 4/α (under-damped).
    e.settle_at = static_cast<std::size_t>(std::lround(4.0 * e.tau));
    e.settled = n >= e.settle_at + min_after;
  }
  return e;
}

}  // namespace heft
