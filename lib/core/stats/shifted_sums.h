// shifted_sums.h — power sums Σd, Σd², Σd³, Σd⁴ of d = x − reference, with O(1) add and
// remove: the moment engine of the sliding windows (count window and time window).
//
// Why shifted: weights are ~1e2..1e6 with noise of ~1e-1..1e1; sums of raw x² would
// cancel away the variance. With the reference near the mean, d is of the order of the
// noise and nothing cancels. The owner calls Rebase() with the window's values every
// O(window) removals (amortised O(1)), which resets the reference to the current mean and
// discards the rounding accumulated by add/remove pairs. Not thread-safe; a plain value.
#pragma once

#include <cstddef>
#include <optional>

namespace heft {

class ShiftedSums {
 public:
  void Clear() { *this = ShiftedSums(); }
  bool has_reference() const { return has_reference_; }
  double reference() const { return reference_; }

  void Add(double x) {
    if (!has_reference_) {
      reference_ = x;
      has_reference_ = true;
    }
    const double d = x - reference_;
    const double d2 = d * d;
    s1_ += d;
    s2_ += d2;
    s3_ += d2 * d;
    s4_ += d2 * d2;
  }
  void Remove(double x) {
    const double d = x - reference_;
    const double d2 = d * d;
    s1_ -= d;
    s2_ -= d2;
    s3_ -= d2 * d;
    s4_ -= d2 * d2;
  }

  // Restarts the sums about `reference` (call Add for every value in the window next).
  void StartRebase(double reference) {
    *this = ShiftedSums();
    reference_ = reference;
    has_reference_ = true;
  }

  // Figures for a window of n values (n must be the number of values added minus removed).
  double Mean(std::size_t n) const;
  double Variance(std::size_t n) const;  // n − 1 divisor, never negative
  std::optional<double> Skewness(std::size_t n) const;
  std::optional<double> ExcessKurtosis(std::size_t n) const;

  // Restart checkpoint (line_monitor_checkpoint.h): the running statistics as plain values;
  // RestoreState(SaveState()) then the same inputs gives the same outputs.
  struct State {
    bool has_reference = false;
    double reference = 0.0, s1 = 0.0, s2 = 0.0, s3 = 0.0, s4 = 0.0;
  };
  State SaveState() const { return {has_reference_, reference_, s1_, s2_, s3_, s4_}; }
  void RestoreState(const State& s) {
    has_reference_ = s.has_reference;
    reference_ = s.reference;
    s1_ = s.s1;
    s2_ = s.s2;
    s3_ = s.s3;
    s4_ = s.s4;
  }

 private:
  // Biased central moments m2, m3, m4 (divisor n); m2 = 0 when cancellation ate it.
  void Central(std::size_t n, double* m2, double* m3, double* m4) const;

  bool has_reference_ = false;
  double reference_ = 0.0;
  double s1_ = 0.0, s2_ = 0.0, s3_ = 0.0, s4_ = 0.0;
};

}  // namespace heft
