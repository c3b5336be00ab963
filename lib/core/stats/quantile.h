// quantile.h — sample quantiles by Hyndman & Fan type 7 (default) and type 6, computed
// exactly as numpy.quantile(method='linear' | 'weibull') does (check-values.md §6.1).
//
// QuantilePosition says which two order statistics to blend and how; the sorted-vector
// function here and OrderStatistics both use it, so every quantile in heft has one
// definition. Pure functions; thread-safe.
#pragma once

#include <cstddef>
#include <span>

#include "core/stats/stats_types.h"

namespace heft {

struct QuantilePosition {
  std::size_t lower = 0;  // 0-based order statistic
  std::size_t upper = 0;  // lower or lower + 1
  double gamma = 0.0;     // weight of the upper one
};

// Position for probability p in [0, 1] among n >= 1 sorted values.
//   type 7: h = (n − 1) p            (0-based; H&F h = (n − 1) p + 1)
//   type 6: h = n p + p − 1          (H&F h = (n + 1) p), clamped to 0..n−1 as numpy does
QuantilePosition QuantileAt(std::size_t n, double p, QuantileType type);

// numpy's _lerp: a + (b − a) t, computed from b's side when t >= 0.5 (exact at t = 1).
inline double QuantileLerp(double a, double b, double t) {
  const double diff = b - a;
  return t >= 0.5 ? b - diff * (1.0 - t) : a + diff * t;
}

// Quantile of ascending `sorted` (non-empty).
double SortedQuantile(std::span<const double> sorted, double p, QuantileType type);

}  // namespace heft
