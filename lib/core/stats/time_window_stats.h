// time_window_stats.h — everything about the packs of the last T minutes of a stream:
// moments, shape, moving-range sigma and exact order statistics, like CountWindowStats but
// with a window that holds whatever arrived in (now − span, now].
//
// Time is passed in (pure core): `now` is the newest time given to Add or AdvanceTo.
// Times are expected non-decreasing; an earlier time is treated as `now` (a clock step
// back must not let old packs stay in the window forever). Non-finite values are refused.
// Moments use ShiftedSums, rebuilt about the current mean after as many removals as the
// window holds (amortised O(1)); order statistics an OrderStatistics (order_statistics.h).
// Not thread-safe; one owner.
#pragma once

#include <cstddef>
#include <cstdint>
#include <deque>
#include <vector>

#include "core/stats/order_statistics.h"
#include "core/stats/shifted_sums.h"
#include "core/stats/stats_types.h"

namespace heft {

class TimeWindowStats {
 public:
  explicit TimeWindowStats(std::int64_t span_ms);

  bool Add(std::int64_t time_ms, double x);
  // Moves `now` forward (e.g. on a silent line) and drops what fell out of the window.
  void AdvanceTo(std::int64_t now_ms);
  void Clear();

  std::int64_t span_ms() const { return span_ms_; }
  std::int64_t now_ms() const { return now_ms_; }
  std::size_t count() const { return samples_.size(); }

  double Mean() const { return sums_.Mean(count()); }
  double Variance() const { return sums_.Variance(count()); }
  double StdDev() const;
  double MovingRangeSigma() const;
  const OrderStatistics& order() const { return order_; }
  double Quantile(double p, QuantileType type = QuantileType::kType7) const {
    return order_.Quantile(p, type);
  }
  WindowSummary Summary(QuantileType type = QuantileType::kType7) const;
  void Values(std::vector<double>* out) const;  // oldest first
  void SortedValues(std::vector<double>* out) const { order_.SortedValues(out); }

 private:
  struct Sample {
    std::int64_t time_ms;
    double value;
  };
  void Evict();
  void Rebuild();

  std::int64_t span_ms_;
  std::int64_t now_ms_ = 0;
  bool has_time_ = false;
  std::deque<Sample> samples_;
  ShiftedSums sums_;
  double sum_mr_ = 0.0;
  std::size_t removals_since_rebuild_ = 0;
  OrderStatistics order_;
};

}  // namespace heft
