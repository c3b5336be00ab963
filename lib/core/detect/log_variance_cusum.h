// log_variance_cusum.h — is the spread rising? An upper CUSUM on the log of the
// sample variance of consecutive subgroups of residuals.
//
// For normal data, ln(s²/σ²) with ν = n − 1 degrees of freedom has mean
// ψ(ν/2) − ln(ν/2) and variance ψ′(ν/2) (the log of a scaled χ²_ν; the log
// transform of Crowder & Hamilton, JQT 24(1), 1992, where it feeds an EWMA — here a
// CUSUM). Each subgroup's value is standardised with those moments (plus ln of the
// expected s²/σ² under lag-1 autocorrelation, ExpectedVarianceRatio), then
// S = max(0, S + u − k), signal when S > h. The log χ² is skewed to the left, so the
// normal-theory design errs on the quiet side. Used by LineMonitor (spread).
// Pure; O(1) per value; not thread-safe.
#pragma once

#include <cstdint>

namespace heft {

class LogVarianceCusum {
 public:
  // `subgroup` ≥ 2 values per variance; k and h in standard units of ln s².
  LogVarianceCusum(int subgroup, double k, double h, double variance_ratio = 1.0);

  // Adds one residual (already divided by the baseline σ). True when a subgroup
  // completes and the sum passes h.
  bool Add(double z);
  void Reset();

  double statistic() const { return sum_; }
  // Latest completed subgroup's s/σ, and an EWMA (λ = 0.2) of the standardised
  // log variances (≈ 0 in control; used to see the spread return).
  double last_ratio() const { return last_ratio_; }
  double smoothed() const { return smoothed_log_; }
  int subgroup() const { return n_; }
  // Standard deviation of ln s² for this subgroup size.
  double LogSd() const { return sd_; }

  // E[s²]/σ² for n consecutive values of an AR(1) series with lag-1 correlation phi:
  //   1 − 2/(n(n−1)) Σ_{k=1}^{n−1} (n − k) φᵏ.
  static double ExpectedVarianceRatio(int n, double phi);

  // Restart checkpoint (line_monitor_checkpoint.h): the running statistics as plain values;
  // RestoreState(SaveState()) then the same inputs gives the same outputs.
  // (mean and sd depend on the variance ratio the line was armed with.)
  struct State {
    double mean = 0.0, sd = 1.0, sum = 0.0;
    int count = 0;
    double s1 = 0.0, s2 = 0.0, last_ratio = 1.0, smoothed_log = 0.0;
  };
  State SaveState() const {
    return {mean_, sd_, sum_, count_, s1_, s2_, last_ratio_, smoothed_log_};
  }
  void RestoreState(const State& s) {
    mean_ = s.mean;
    sd_ = s.sd;
    sum_ = s.sum;
    count_ = s.count;
    s1_ = s.s1;
    s2_ = s.s2;
    last_ratio_ = s.last_ratio;
    smoothed_log_ = s.smoothed_log;
  }

 private:
  int n_;
  double k_, h_;
  double mean_ = 0.0, sd_ = 1.0;
  double sum_ = 0.0;
  int count_ = 0;
  double s1_ = 0.0, s2_ = 0.0;
  double last_ratio_ = 1.0;
  double smoothed_log_ = 0.0;
};

}  // namespace heft
