#include "core/detect/settle_fit.h"

#include <algorithm>
#include <cmath>
#include <complex>
#include <numbers>
#include <utility>
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

// Terms of a series decaying as dⁱ worth summing: until dⁱ falls under 1e-12 (the
// rest adds nothing), at most n.
std::size_t Terms(double d, std::size_t n) {
  if (!(d > 0.0)) return std::min<std::size_t>(n, 1);
  if (d >= 1.0) return n;
  const double t = std::ceil(std::log(1e-12) / std::log(d)) + 1.0;
  return t >= static_cast<double>(n) ? n : static_cast<std::size_t>(t);
}

// Σ_{i<m} qⁱ = (1 − qᵐ)/(1 − q), |q| < 1 and q away from 1 (the grids keep it so).
std::complex<double> GeometricSum(std::complex<double> q, std::size_t m) {
  const double dm = static_cast<double>(m);
  const std::complex<double> qm = std::polar(std::pow(std::abs(q), dm), std::arg(q) * dm);
  return (1.0 - qm) / (1.0 - q);
}

double GeometricSum(double q, std::size_t m) {
  return (1.0 - std::pow(q, static_cast<double>(m))) / (1.0 - q);
}

// Σ_{i<m} yᵢ·zⁱ by Horner's rule: one complex multiply-add per value.
std::complex<double> Polynomial(const std::vector<double>& y, std::size_t m,
                                std::complex<double> z) {
  double re = 0.0, im = 0.0;
  const double zr = z.real(), zi = z.imag();
  for (std::size_t i = m; i-- > 0;) {
    const double nr = re * zr - im * zi + y[i];
    im = re * zi + im * zr;
    re = nr;
  }
  return {re, im};
}

// Σ_{i<m} yᵢ·zₖⁱ for several z at once, by Horner's rule: the chains for different z
// are independent, so the loop over them runs in parallel (and vectorises) instead of
// waiting on one multiply-add chain.
void Polynomials(const std::vector<double>& y, std::size_t m, const std::vector<double>& zr,
                 const std::vector<double>& zi, std::vector<double>* re, std::vector<double>* im) {
  const std::size_t k = zr.size();
  re->assign(k, 0.0);
  im->assign(k, 0.0);
  double* __restrict r = re->data();
  double* __restrict q = im->data();
  const double* __restrict a = zr.data();
  const double* __restrict b = zi.data();
  for (std::size_t i = m; i-- > 0;) {
    const double yi = y[i];
    for (std::size_t j = 0; j < k; ++j) {
      const double nr = r[j] * a[j] - q[j] * b[j] + yi;
      q[j] = r[j] * b[j] + q[j] * a[j];
      r[j] = nr;
    }
  }
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
  // The sums of rᵗ and r²ᵗ are geometric series in closed form; only Σ yₜrᵗ needs the data.
  const double max_tau = dn / 2.0;
  for (double tau = 1.0; tau <= max_tau; tau *= 1.04) {
    const double r = std::exp(-1.0 / tau);
    const std::size_t m = Terms(r, n);
    const double se = GeometricSum(r, m), see = GeometricSum(r * r, m);
    const double sye = Polynomial(y, m, r).real();
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
  // With z = e^{−α+iω} the basis is Re/Im zᵗ: its sums and those of its squares and
  // product (cos² = (1 + cos 2ωt)/2, …) are geometric series in closed form, and the
  // data enter once, through Σ yₜzᵗ by Horner's rule. (A loop over t for all seven sums
  // made this grid most of a line's start-up cost.)
  // The grid is τⱼ = 2·1.08ʲ, periodᵢ = 6·1.05ⁱ (≤ n/2 and ≤ 8τ). Its BIC surface is
  // smooth, so every other point in each direction is fitted first, then the full grid
  // around the best few of those: a quarter of the fits, and the same optimum
  // wherever it lies next to one of them (`heft score` settle figures unchanged).
  auto tau_at = [](int j) { return 2.0 * std::pow(1.08, j); };
  auto period_at = [](int i) { return 6.0 * std::pow(1.05, i); };
  auto periods_for = [&](double tau) {  // how many period indices this τ allows
    const double top = std::min(dn / 2.0, 8.0 * tau);
    return top < 6.0 ? 0 : static_cast<int>(std::floor(std::log(top / 6.0) / std::log(1.05))) + 1;
  };
  const int taus = max_tau < 2.0
                       ? 0
                       : static_cast<int>(std::floor(std::log(max_tau / 2.0) / std::log(1.08))) + 1;
  struct Fit {
    double bic;
    int j, i;
    double amplitude, level;
  };
  constexpr std::size_t kRefine = 3;
  std::vector<Fit> best_fits;  // the kRefine best of the coarse pass, best first
  auto keep = [&](const Fit& f) {
    if (best_fits.size() == kRefine && f.bic >= best_fits.back().bic) return;
    if (best_fits.size() == kRefine) best_fits.pop_back();
    best_fits.insert(std::upper_bound(best_fits.begin(), best_fits.end(), f,
                                      [](const Fit& x, const Fit& y) { return x.bic < y.bic; }),
                     f);
  };
  std::vector<int> chosen;
  std::vector<double> zr, zi, yz_re, yz_im;
  // Fits τⱼ with each period index in `chosen`; calls `take` with each fit.
  auto fit_tau = [&](int j, auto&& take) {
    const double tau = tau_at(j);
    const double decay = std::exp(-1.0 / tau);
    const std::size_t m = Terms(decay, n);
    const double squares = GeometricSum(decay * decay, m);  // Σ e^{−2αt}
    zr.clear();
    zi.clear();
    for (int i : chosen) {
      const std::complex<double> z = std::polar(decay, 2.0 * std::numbers::pi / period_at(i));
      zr.push_back(z.real());
      zi.push_back(z.imag());
    }
    Polynomials(y, m, zr, zi, &yz_re, &yz_im);
    for (std::size_t k = 0; k < chosen.size(); ++k) {
      const double w = 2.0 * std::numbers::pi / period_at(chosen[k]);
      const std::complex<double> z(zr[k], zi[k]);
      const std::complex<double> s1 = GeometricSum(z, m);
      const std::complex<double> s2 = GeometricSum(std::polar(decay * decay, 2.0 * w), m);
      const double sc = s1.real(), ss = s1.imag();
      const double scc = 0.5 * (squares + s2.real()), sss = 0.5 * (squares - s2.real());
      const double scs = 0.5 * s2.imag();
      const double syc = yz_re[k], sys = yz_im[k];
      double a[3][3] = {{dn, sc, ss}, {sc, scc, scs}, {ss, scs, sss}};
      double b[3] = {sy, syc, sys};
      double x[3] = {0, 0, 0};
      if (!Solve(3, a, b, x)) continue;
      const double sse = std::max(1e-300, syy - (x[0] * sy + x[1] * syc + x[2] * sys));
      take(Fit{dn * std::log(sse / dn) + 5.0 * std::log(dn), j, chosen[k], std::hypot(x[1], x[2]),
               x[0]});
    }
  };
  for (int j = 0; j < taus; j += 2) {
    chosen.clear();
    for (int i = 0; i < periods_for(tau_at(j)); i += 2) chosen.push_back(i);
    fit_tau(j, keep);
  }
  Fit under{INFINITY, -1, -1, 0.0, 0.0};
  std::vector<std::pair<int, int>> done;  // (j, i) fitted in the refinement
  for (const Fit& coarse : std::vector<Fit>(best_fits)) {
    for (int j = std::max(0, coarse.j - 1); j <= std::min(taus - 1, coarse.j + 1); ++j) {
      chosen.clear();
      const int top = periods_for(tau_at(j));
      for (int i = std::max(0, coarse.i - 1); i <= std::min(top - 1, coarse.i + 1); ++i) {
        if (std::find(done.begin(), done.end(), std::make_pair(j, i)) != done.end()) continue;
        done.emplace_back(j, i);
        chosen.push_back(i);
      }
      fit_tau(j, [&](const Fit& f) {
        if (f.bic < under.bic) under = f;
      });
    }
  }
  if (under.j >= 0 && under.bic < best_bic) {
    best_bic = under.bic;
    e.model = SettleModel::kUnderdamped;
    e.tau = tau_at(under.j);
    e.period = period_at(under.i);
    e.amplitude = under.amplitude;
    level = under.level;
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
