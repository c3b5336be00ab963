#include "core/design/gauss_legendre.h"

#include <algorithm>
#include <cmath>
#include <map>
#include <numbers>
#include <utility>
#include <vector>

namespace heft {
namespace {

// The non-negative half of the n-point rule on [−1, 1]: (root, weight), roots descending.
std::vector<std::pair<double, double>> ReferenceHalf(int n) {
  const int m = (n + 1) / 2;  // roots are symmetric: find the non-negative half
  std::vector<std::pair<double, double>> half(static_cast<std::size_t>(m));
  for (int i = 1; i <= m; ++i) {
    double x = std::cos(std::numbers::pi * (i - 0.25) / (n + 0.5));
    double derivative = 1.0;
    for (int iteration = 0; iteration < 100; ++iteration) {
      // Three-term recurrence: j·Pⱼ = (2j − 1)·x·Pⱼ₋₁ − (j − 1)·Pⱼ₋₂.
      double p0 = 1.0, p1 = 0.0;
      for (int j = 1; j <= n; ++j) {
        const double p2 = p1;
        p1 = p0;
        p0 = ((2.0 * j - 1.0) * x * p1 - (j - 1.0) * p2) / j;
      }
      derivative = n * (x * p0 - p1) / (x * x - 1.0);
      const double step = p0 / derivative;
      x -= step;
      if (std::fabs(step) < 1e-15) break;
    }
    // Recompute Pₙ' at the converged root for the weight.
    double p0 = 1.0, p1 = 0.0;
    for (int j = 1; j <= n; ++j) {
      const double p2 = p1;
      p1 = p0;
      p0 = ((2.0 * j - 1.0) * x * p1 - (j - 1.0) * p2) / j;
    }
    derivative = n * (x * p0 - p1) / (x * x - 1.0);
    half[static_cast<std::size_t>(i - 1)] = {x, 2.0 / ((1.0 - x * x) * derivative * derivative)};
  }
  return half;
}

// A design asks for the same few point counts hundreds of times (root finding over
// the ARL integral equations), so each count's reference rule is found once per
// thread: no lock, and the function stays thread-safe. Entries are never erased.
const std::vector<std::pair<double, double>>& CachedReferenceHalf(int n) {
  thread_local std::map<int, std::vector<std::pair<double, double>>> cache;
  auto it = cache.find(n);
  if (it == cache.end()) it = cache.emplace(n, ReferenceHalf(n)).first;
  return it->second;
}

}  // namespace

QuadratureRule GaussLegendre(int n, double a, double b) {
  n = std::max(1, n);
  QuadratureRule rule;
  rule.nodes.assign(n, 0.0);
  rule.weights.assign(n, 0.0);
  const double mid = 0.5 * (a + b);
  const double half = 0.5 * (b - a);
  const auto& reference = CachedReferenceHalf(n);
  for (int i = 1; i <= static_cast<int>(reference.size()); ++i) {
    const auto [x, weight] = reference[static_cast<std::size_t>(i - 1)];
    rule.nodes[i - 1] = mid - half * x;  // x runs from near 1 downwards: ascending nodes
    rule.nodes[n - i] = mid + half * x;
    rule.weights[i - 1] = half * weight;
    rule.weights[n - i] = half * weight;
  }
  return rule;
}

}  // namespace heft
