// count_window_stats.h — everything about the last N packs of a stream: moments, shape,
// moving-range sigma (RollingMoments, O(1)) and exact order statistics (OrderStatistics,
// O(log N) search + a short block move) kept in step.
//
// Used per line and per head by the monitors and by `heft stats --window N`.
// Non-finite values are refused (Add returns false; the caller counts them).
// Not thread-safe; one owner.
#pragma once

#include <cstddef>
#include <vector>

#include "core/stats/order_statistics.h"
#include "core/stats/rolling_moments.h"
#include "core/stats/stats_types.h"

namespace heft {

class CountWindowStats {
 public:
  explicit CountWindowStats(std::size_t capacity);

  bool Add(double x);
  void Clear();

  std::size_t count() const { return moments_.count(); }
  std::size_t capacity() const { return moments_.capacity(); }
  const RollingMoments& moments() const { return moments_; }
  const OrderStatistics& order() const { return order_; }

  // Any quantile of the window (quantile.h definitions); count() must be >= 1.
  double Quantile(double p, QuantileType type = QuantileType::kType7) const {
    return order_.Quantile(p, type);
  }
  WindowSummary Summary(QuantileType type = QuantileType::kType7) const;
  void Values(std::vector<double>* out) const { moments_.CopyInOrder(out); }  // oldest first
  void SortedValues(std::vector<double>* out) const { order_.SortedValues(out); }

 private:
  RollingMoments moments_;
  OrderStatistics order_;
};

}  // namespace heft
