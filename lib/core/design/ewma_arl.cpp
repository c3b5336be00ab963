#include "core/design/ewma_arl.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <utility>
#include <vector>

#include "core/design/gauss_legendre.h"
#include "core/design/linear_solve.h"
#include "core/design/standard_normal.h"

namespace heft {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

bool ValidParameters(double lambda, double limit) {
  return lambda > 0.0 && lambda <= 1.0 && limit > 0.0 && std::isfinite(limit);
}

// Density of the next z at y given the current z = u.
double Kernel(double lambda, double delta, double u, double y) {
  return NormalPdf((y - (1.0 - lambda) * u) / lambda - delta) / lambda;
}

struct EwmaSolution {
  QuadratureRule rule;
  std::vector<double> at_nodes;
  bool ok = false;

  double At(double lambda, double delta, double u) const {
    if (!ok) return kInf;
    double sum = 1.0;
    for (std::size_t j = 0; j < rule.nodes.size(); ++j) {
      sum += rule.weights[j] * Kernel(lambda, delta, u, rule.nodes[j]) * at_nodes[j];
    }
    return sum;
  }
};

EwmaSolution Solve(double lambda, double limit, double delta, int nodes) {
  EwmaSolution s;
  if (!ValidParameters(lambda, limit) || !std::isfinite(delta)) return s;
  int n = nodes > 0 ? nodes : EwmaArlNodes(lambda, limit);
  const double c = EwmaAsymptoticLimit(lambda, limit);
  const bool symmetric = delta == 0.0;
  if (symmetric && n % 2 == 1) ++n;  // pair every node with its mirror image
  s.rule = GaussLegendre(n, -c, c);
  const std::size_t total = static_cast<std::size_t>(n);
  // With symmetry the unknowns are L at the upper half of the nodes (index
  // n/2 + r); the mirror of node n/2 + r is node n/2 − 1 − r.
  const std::size_t size = symmetric ? total / 2 : total;
  const std::size_t offset = symmetric ? total / 2 : 0;
  std::vector<double> a(size * size, 0.0);
  std::vector<double> b(size, 1.0);
  for (std::size_t i = 0; i < size; ++i) {
    const double u = s.rule.nodes[offset + i];
    double* row = a.data() + i * size;
    for (std::size_t j = 0; j < size; ++j) {
      const std::size_t node = offset + j;
      double v = s.rule.weights[node] * Kernel(lambda, delta, u, s.rule.nodes[node]);
      if (symmetric) {
        const std::size_t mirror = total / 2 - 1 - j;
        v += s.rule.weights[mirror] * Kernel(lambda, delta, u, s.rule.nodes[mirror]);
      }
      row[j] = -v;
    }
    row[i] += 1.0;
  }
  if (!SolveLinearSystem(a, b)) return s;
  s.at_nodes.assign(total, 0.0);
  for (std::size_t j = 0; j < size; ++j) {
    s.at_nodes[offset + j] = b[j];
    if (symmetric) s.at_nodes[total / 2 - 1 - j] = b[j];
  }
  s.ok = true;
  for (double v : s.at_nodes) s.ok = s.ok && std::isfinite(v) && v >= 1.0;
  return s;
}

}  // namespace

double EwmaAsymptoticLimit(double lambda, double limit) {
  return limit * std::sqrt(lambda / (2.0 - lambda));
}

double EwmaLimitAt(double lambda, double limit, int i) {
  if (i < 1) return 0.0;
  const double decay = std::pow(1.0 - lambda, 2.0 * i);
  return limit * std::sqrt(lambda / (2.0 - lambda) * (1.0 - decay));
}

int EwmaArlNodes(double lambda, double limit) {
  if (!ValidParameters(lambda, limit)) return 48;
  // Gauss–Legendre spacing near the middle is about π·c/n; keeping it below
  // about λ/1.5 gives 1e-9 relative error for λ ≥ 0.01 (checked against 400 nodes).
  const double c = EwmaAsymptoticLimit(lambda, limit);
  const double wanted = 1.5 * std::numbers::pi * c / lambda;
  return std::clamp(static_cast<int>(std::ceil(wanted)) + 24, 32, 400);
}

double EwmaArl(double lambda, double limit, double delta, double start, int nodes) {
  const EwmaSolution s = Solve(lambda, limit, delta, nodes);
  const double c = EwmaAsymptoticLimit(lambda, limit);
  if (!s.ok || std::fabs(start) > c) return s.ok ? 1.0 : kInf;
  return s.At(lambda, delta, start);
}

namespace {

// In-control one-step matrix on the nodes: mass near y_j ≈ w_j·K(u_i, y_j).
std::vector<double> StepMatrix(double lambda, const QuadratureRule& rule) {
  const std::size_t n = rule.nodes.size();
  std::vector<double> q(n * n);
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < n; ++j) {
      q[i * n + j] = rule.weights[j] * Kernel(lambda, 0.0, rule.nodes[i], rule.nodes[j]);
    }
  }
  return q;
}

// Left Perron vector of Q by inverse iteration π ← π·(I − Q)⁻¹ (converges by
// about 1/ARL per step), started from the asymptotic law N(0, λ/(2 − λ)).
std::vector<double> QuasiStationary(double lambda, const QuadratureRule& rule) {
  const std::size_t n = rule.nodes.size();
  const std::vector<double> q = StepMatrix(lambda, rule);
  std::vector<double> a(n * n);  // (I − Q)ᵀ
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < n; ++j) a[j * n + i] = (i == j ? 1.0 : 0.0) - q[i * n + j];
  }
  const double sd = std::sqrt(lambda / (2.0 - lambda));
  std::vector<double> pi(n);
  double total = 0.0;
  for (std::size_t j = 0; j < n; ++j)
    total += pi[j] = rule.weights[j] * NormalPdf(rule.nodes[j] / sd);
  for (double& v : pi) v /= total;
  LuSolver lu;
  if (!lu.Factor(std::move(a), n)) return pi;
  for (int iteration = 0; iteration < 50; ++iteration) {
    std::vector<double> next = pi;
    lu.Solve(next);
    total = 0.0;
    for (double v : next) total += v;
    if (!(total > 0.0) || !std::isfinite(total)) break;
    double change = 0.0;
    for (std::size_t j = 0; j < n; ++j) {
      next[j] /= total;
      change = std::max(change, std::fabs(next[j] - pi[j]));
    }
    pi.swap(next);
    if (change < 1e-14) break;
  }
  return pi;
}

}  // namespace

double EwmaSteadyStateArl(double lambda, double limit, double delta, int nodes) {
  const EwmaSolution s = Solve(lambda, limit, delta, nodes);
  if (!s.ok) return kInf;
  const std::vector<double> pi = QuasiStationary(lambda, s.rule);
  double arl = 0.0;
  for (std::size_t j = 0; j < pi.size(); ++j) arl += pi[j] * s.at_nodes[j];
  return arl;
}

double EwmaRampArl(double lambda, double limit, double slope, bool steady_start, int nodes) {
  if (!ValidParameters(lambda, limit) || !std::isfinite(slope)) return kInf;
  const int n = nodes > 0 ? nodes : EwmaArlNodes(lambda, limit);
  const double c = EwmaAsymptoticLimit(lambda, limit);
  const QuadratureRule rule = GaussLegendre(n, -c, c);
  const std::size_t size = rule.nodes.size();
  // K_δ(u, y) = K₀(u, y)·e^{yδ/λ}·e^{−(1−λ)uδ/λ}·e^{−δ²/2}: the shift factors out.
  const std::vector<double> base = StepMatrix(lambda, rule);
  std::vector<double> mass(size, 0.0), scaled(size), next(size);
  double survival = 1.0, arl = 1.0;  // P(N > 0) = 1
  if (steady_start) {
    mass = QuasiStationary(lambda, rule);
  } else {
    survival = 0.0;
    for (std::size_t j = 0; j < size; ++j) {
      survival += mass[j] = rule.weights[j] * Kernel(lambda, slope, 0.0, rule.nodes[j]);
    }
    arl += survival;
  }
  for (int t = steady_start ? 1 : 2; t < 1000000 && survival > 1e-10; ++t) {
    const double delta = slope * t;
    if (std::fabs(delta) * (c + 1.0) / lambda > 600.0) break;  // alarm is certain by now
    const double pull = (1.0 - lambda) * delta / lambda;
    for (std::size_t i = 0; i < size; ++i) scaled[i] = mass[i] * std::exp(-rule.nodes[i] * pull);
    std::fill(next.begin(), next.end(), 0.0);
    for (std::size_t i = 0; i < size; ++i) {
      const double* row = base.data() + i * size;
      const double v = scaled[i];
      double* out = next.data();  // raw pointers: this loop dominates, also in Debug builds
      for (std::size_t j = 0; j < size; ++j) out[j] += v * row[j];
    }
    const double common = std::exp(-0.5 * delta * delta);
    survival = 0.0;
    for (std::size_t j = 0; j < size; ++j) {
      next[j] *= std::exp(rule.nodes[j] * delta / lambda) * common;
      survival += next[j];
    }
    mass.swap(next);
    arl += survival;
  }
  return arl;
}

}  // namespace heft
