// moments.h — exact, stable moments of a stream: a Welford-style accumulator of count, mean
// and central sums M2..M4 (Pébay 2008 one-pass and merge formulas) with min and max, and the
// bias-corrected shape estimators shared by every window type.
//
// The running mean is kept about the first value (`shift`), so at 1,000,000 g the mean of
// the deviations keeps full relative precision and differences between the means of two
// accumulators (head offsets, ANOVA) do not lose the ~1e-10 g that storing 1e6-level means
// would. Used by CumulativeStats, the head comparison and batch summaries; merging lets
// per-head accumulators roll up to a line. Not thread-safe; a plain value.
#pragma once

#include <cstddef>
#include <optional>

namespace heft {

// Bias-corrected sample skewness G1 from n and the biased central moments m2 = M2/n,
// m3 = M3/n (scipy.stats.skew, bias=False). Empty when n < 3 or m2 == 0.
std::optional<double> SampleSkewness(double n, double m2, double m3);
// Bias-corrected sample excess kurtosis G2 (scipy.stats.kurtosis, bias=False, fisher=True).
// Empty when n < 4 or m2 == 0.
std::optional<double> SampleExcessKurtosis(double n, double m2, double m4);

class MomentAccumulator {
 public:
  void Add(double x);
  void Merge(const MomentAccumulator& other);
  void Clear() { *this = MomentAccumulator(); }

  std::size_t count() const { return n_; }
  double Mean() const { return shift_ + mean_; }
  // Mean − reference, computed without rounding the mean to the reference's magnitude first
  // (exact in the shift difference when reference and shift are within a factor of 2).
  double MeanAbout(double reference) const { return (shift_ - reference) + mean_; }
  double shift() const { return shift_; }
  double Variance() const;  // n − 1 divisor; 0 with fewer than 2 values
  double StdDev() const;
  double SumSquaredDeviations() const { return m2_; }
  double Min() const { return min_; }
  double Max() const { return max_; }
  std::optional<double> Skewness() const;
  std::optional<double> ExcessKurtosis() const;

 private:
  std::size_t n_ = 0;
  double shift_ = 0.0;  // first value added
  double mean_ = 0.0;   // mean of x − shift
  double m2_ = 0.0;     // Σ (x − mean)²
  double m3_ = 0.0;
  double m4_ = 0.0;
  double min_ = 0.0;
  double max_ = 0.0;
};

}  // namespace heft
