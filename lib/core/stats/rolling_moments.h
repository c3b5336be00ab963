// rolling_moments.h — mean, standard deviation, shape and moving-range sigma over the
// last N values (a count window).
//
// O(1) per update. Power sums are kept about a reference value (ShiftedSums) so weights
// like 1,000,000 g + small noise lose no precision; every `capacity` removals they are
// rebuilt from the buffer about the current mean, so rounding from add/remove pairs cannot
// accumulate over long runs (tested over 10^7 updates against a two-pass reference).
// Not thread-safe; owned by one LineMonitor (or one CountWindowStats).
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <vector>

#include "core/stats/shifted_sums.h"

namespace heft {

class RollingMoments {
 public:
  explicit RollingMoments(std::size_t capacity);

  void Add(double x);
  void Clear();

  std::size_t count() const { return count_; }
  std::size_t capacity() const { return buffer_.size(); }
  bool full() const { return count_ == buffer_.size(); }
  // Values added since construction or Clear(), including those that left the window.
  std::uint64_t total_added() const { return total_added_; }

  double Mean() const;
  // Sample standard deviation (n − 1 divisor); 0 with fewer than 2 values.
  double StdDev() const;
  double Variance() const;
  // Bias-corrected skewness G1 and excess kurtosis G2 (scipy bias=False); empty for
  // fewer than 3 / 4 values or no spread.
  std::optional<double> Skewness() const;
  std::optional<double> ExcessKurtosis() const;
  // Mean of |x[i] − x[i−1]| over the window's consecutive pairs.
  double MeanMovingRange() const;
  // Short-term sigma: mean moving range / d2, d2 = 1.128 for spans of 2
  // (d2 = 2/sqrt(pi) = 1.12838; check-values.md §2).
  double MovingRangeSigma() const;
  double Oldest() const;
  double Newest() const;
  // i-th value of the window, 0 = oldest; i < count().
  double At(std::size_t i) const;
  // The window's values, oldest first (replaces *out).
  void CopyInOrder(std::vector<double>* out) const;

  // Restart checkpoint (line_monitor_checkpoint.h): the running statistics as plain values;
  // RestoreState(SaveState()) then the same inputs gives the same outputs.
  // RestoreState refuses (false) a state whose buffer is not this window's size.
  struct State {
    std::vector<double> buffer;  // raw ring, capacity() values
    std::uint64_t head = 0, count = 0, total_added = 0, removals_since_recompute = 0;
    ShiftedSums::State sums;
    double sum_mr = 0.0;
  };
  State SaveState() const;
  bool RestoreState(const State& s);

 private:
  void Recompute();

  std::vector<double> buffer_;
  std::size_t head_ = 0;  // slot of the next write
  std::size_t count_ = 0;
  std::uint64_t total_added_ = 0;
  ShiftedSums sums_;
  double sum_mr_ = 0.0;  // Σ |x[i] − x[i−1]| over pairs inside the window
  std::size_t removals_since_recompute_ = 0;
};

}  // namespace heft
