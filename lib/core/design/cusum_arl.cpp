#include "core/design/cusum_arl.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <utility>
#include <vector>

#include "core/design/gauss_legendre.h"
#include "core/design/linear_solve.h"
#include "core/design/standard_normal.h"

namespace heft {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

// The Nyström solution for one (k, h, δ): L(0) and L at the nodes; L(u) for any
// start u follows from the integral equation itself (Nyström interpolation).
struct OneSidedSolution {
  QuadratureRule rule;
  std::vector<double> at_nodes;
  double at_zero = kInf;
  bool ok = false;

  double At(double u, double k, double delta) const {
    if (!ok) return kInf;
    if (u <= 0.0) return at_zero;
    double sum = 1.0 + at_zero * NormalCdf(k - u - delta);
    for (std::size_t j = 0; j < rule.nodes.size(); ++j) {
      sum += rule.weights[j] * NormalPdf(rule.nodes[j] + k - u - delta) * at_nodes[j];
    }
    return sum;
  }
};

// Unknown 0 is L(0), unknowns 1..n are L(y_j). Row for start u:
//   L(u) − L(0)·Φ(k − u − δ) − Σ w_j φ(y_j + k − u − δ) L(y_j) = 1.
OneSidedSolution SolveOneSided(double k, double h, double delta, int nodes) {
  OneSidedSolution s;
  if (!(h > 0.0) || !std::isfinite(h) || !std::isfinite(k) || !std::isfinite(delta)) return s;
  const int n = nodes > 0 ? nodes : CusumArlNodes(h);
  s.rule = GaussLegendre(n, 0.0, h);
  const std::size_t size = static_cast<std::size_t>(n) + 1;
  std::vector<double> a(size * size, 0.0);
  std::vector<double> b(size, 1.0);
  for (std::size_t i = 0; i < size; ++i) {
    const double u = i == 0 ? 0.0 : s.rule.nodes[i - 1];
    double* row = a.data() + i * size;
    row[0] -= NormalCdf(k - u - delta);
    for (std::size_t j = 1; j < size; ++j) {
      row[j] -= s.rule.weights[j - 1] * NormalPdf(s.rule.nodes[j - 1] + k - u - delta);
    }
    row[i] += 1.0;
  }
  if (!SolveLinearSystem(a, b)) return s;
  s.at_zero = b[0];
  s.at_nodes.assign(b.begin() + 1, b.end());
  s.ok = std::isfinite(s.at_zero) && s.at_zero >= 1.0;
  return s;
}

double Combine(double up, double down) {
  if (!(up > 0.0) || !(down > 0.0)) return kInf;
  return 1.0 / (1.0 / up + 1.0 / down);
}

// One-step matrix of the upper sum on {0, y_1..y_n} when x ~ N(δ, 1): row i
// is the start (0 or y_i), column 0 the atom at zero, column j the mass near y_j.
std::vector<double> StepMatrix(double k, double delta, const QuadratureRule& rule) {
  const std::size_t size = rule.nodes.size() + 1;
  std::vector<double> q(size * size);
  for (std::size_t i = 0; i < size; ++i) {
    const double u = i == 0 ? 0.0 : rule.nodes[i - 1];
    q[i * size] = NormalCdf(k - u - delta);
    for (std::size_t j = 1; j < size; ++j) {
      q[i * size + j] = rule.weights[j - 1] * NormalPdf(rule.nodes[j - 1] + k - u - delta);
    }
  }
  return q;
}

// Quasi-stationary law of the in-control (δ = 0) upper sum on {0, y_1..y_n}:
// the left Perron vector π of Q, found by inverse iteration π ← π·(I − Q)⁻¹,
// which converges by the factor (1 − ρ₁)/(1 − ρ₂) ≈ 1/ARL per step.
std::vector<double> QuasiStationary(double k, const QuadratureRule& rule) {
  const std::size_t size = rule.nodes.size() + 1;
  const std::vector<double> q = StepMatrix(k, 0.0, rule);
  std::vector<double> a(size * size);  // (I − Q)ᵀ
  for (std::size_t i = 0; i < size; ++i) {
    for (std::size_t j = 0; j < size; ++j) a[j * size + i] = (i == j ? 1.0 : 0.0) - q[i * size + j];
  }
  std::vector<double> pi(size, 1.0 / static_cast<double>(size));
  LuSolver lu;
  if (!lu.Factor(std::move(a), size)) return pi;
  for (int iteration = 0; iteration < 50; ++iteration) {
    std::vector<double> next = pi;
    lu.Solve(next);
    double total = 0.0;
    for (double v : next) total += v;
    if (!(total > 0.0) || !std::isfinite(total)) break;
    double change = 0.0;
    for (std::size_t j = 0; j < size; ++j) {
      next[j] /= total;
      change = std::max(change, std::fabs(next[j] - pi[j]));
    }
    pi.swap(next);
    if (change < 1e-14) break;
  }
  return pi;
}

}  // namespace

int CusumArlNodes(double h) {
  if (!std::isfinite(h)) return 400;
  return std::clamp(static_cast<int>(std::ceil(3.0 * h)) + 24, 24, 400);
}

double CusumOneSidedArl(double k, double h, double delta, double head_start, int nodes) {
  const OneSidedSolution s = SolveOneSided(k, h, delta, nodes);
  return s.At(std::clamp(head_start, 0.0, h), k, delta);
}

double CusumTwoSidedArl(double k, double h, double delta, double head_start, int nodes) {
  const double up = CusumOneSidedArl(k, h, delta, head_start, nodes);
  // In control the two sides are mirror images: one solve is enough.
  const double down = delta == 0.0 ? up : CusumOneSidedArl(k, h, -delta, head_start, nodes);
  return Combine(up, down);
}

double CusumOneSidedSteadyStateArl(double k, double h, double delta, int nodes) {
  const OneSidedSolution s = SolveOneSided(k, h, delta, nodes);
  if (!s.ok) return kInf;
  const std::vector<double> pi = QuasiStationary(k, s.rule);
  double arl = pi[0] * s.at_zero;
  for (std::size_t j = 0; j < s.at_nodes.size(); ++j) arl += pi[j + 1] * s.at_nodes[j];
  return arl;
}

double CusumTwoSidedSteadyStateArl(double k, double h, double delta, int nodes) {
  const double up = CusumOneSidedSteadyStateArl(k, h, delta, nodes);
  const double down = delta == 0.0 ? up : CusumOneSidedSteadyStateArl(k, h, -delta, nodes);
  return Combine(up, down);
}

double CusumOneSidedRampArl(double k, double h, double slope, bool steady_start, double head_start,
                            int nodes) {
  if (!(h > 0.0) || !std::isfinite(h) || !std::isfinite(k) || !std::isfinite(slope)) return kInf;
  const int n = nodes > 0 ? nodes : CusumArlNodes(h);
  const QuadratureRule rule = GaussLegendre(n, 0.0, h);
  const std::size_t size = rule.nodes.size() + 1;
  // φ(y_j + k − u − δ) = φ(y_j + k − u)·e^{(y_j + k)δ}·e^{−uδ}·e^{−δ²/2}: the shift
  // factors out of the in-control kernel, so each step is one matrix–vector product.
  const std::vector<double> base = StepMatrix(k, 0.0, rule);
  std::vector<double> mass(size, 0.0);
  double survival = 1.0, arl = 1.0;  // P(N > 0) = 1
  if (steady_start) {
    mass = QuasiStationary(k, rule);
  } else {
    // A start at u = head_start: put it in as an extra first step from u.
    const double u = std::clamp(head_start, 0.0, h);
    const double delta = slope;
    mass[0] = NormalCdf(k - u - delta);
    for (std::size_t j = 1; j < size; ++j) {
      mass[j] = rule.weights[j - 1] * NormalPdf(rule.nodes[j - 1] + k - u - delta);
    }
    survival = 0.0;
    for (double v : mass) survival += v;
    arl += survival;
  }
  std::vector<double> scaled(size), next(size);
  for (int t = steady_start ? 1 : 2; t < 1000000 && survival > 1e-10; ++t) {
    const double delta = slope * t;
    if (std::fabs(delta) * (h + k + 1.0) > 600.0) break;  // alarm is certain by now
    for (std::size_t i = 0; i < size; ++i) {
      const double u = i == 0 ? 0.0 : rule.nodes[i - 1];
      scaled[i] = mass[i] * std::exp(-u * delta);
    }
    std::fill(next.begin(), next.end(), 0.0);
    for (std::size_t i = 0; i < size; ++i) {
      const double* row = base.data() + i * size;
      const double v = scaled[i];
      double* out = next.data();  // raw pointers: this loop dominates, also in Debug builds
      for (std::size_t j = 1; j < size; ++j) out[j] += v * row[j];
    }
    double atom = 0.0;
    for (std::size_t i = 0; i < size; ++i) {
      const double u = i == 0 ? 0.0 : rule.nodes[i - 1];
      atom += mass[i] * NormalCdf(k - u - delta);
    }
    next[0] = atom;
    survival = atom;
    const double common = std::exp(-0.5 * delta * delta);
    for (std::size_t j = 1; j < size; ++j) {
      next[j] *= std::exp((rule.nodes[j - 1] + k) * delta) * common;
      survival += next[j];
    }
    mass.swap(next);
    arl += survival;
  }
  return arl;
}

}  // namespace heft
