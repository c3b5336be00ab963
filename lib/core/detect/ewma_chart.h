// ewma_chart.h — two-sided EWMA chart on standardised values, with its ARL.
//
//   zᵢ = λxᵢ + (1−λ)zᵢ₋₁, z₀ = 0; signal when |zᵢ| > L·√(λ/(2−λ)) (asymptotic limits).
// (NIST/SEMATECH e-Handbook §6.3.2.4; Montgomery ISQC §9.2; check-values.md §4.4.)
// The ARL is computed with the Brook & Evans (1972) Markov chain: the in-control band
// is cut into m cells and the chart's value moves between cell midpoints.
// Used by LineMonitor for the drift detector (small λ). Pure; not thread-safe.
#pragma once

namespace heft {

class EwmaChart {
 public:
  EwmaChart(double lambda, double limit_l)
      : lambda_(lambda), limit_l_(limit_l), half_width_(AsymptoticHalfWidth(lambda, limit_l)) {}

  enum class Signal { kNone, kUp, kDown };

  // `allowance` widens the band on both sides (the baseline's own uncertainty, in
  // the units of x); 0 for the textbook chart.
  Signal Update(double x, double allowance = 0.0);
  void Reset(double start = 0.0) {
    value_ = start;
    steps_ = 0;
  }

  double value() const { return value_; }
  long steps() const { return steps_; }
  double lambda() const { return lambda_; }
  double limit_l() const { return limit_l_; }
  // Asymptotic half-width L·√(λ/(2−λ)).
  double HalfWidth() const { return half_width_; }
  static double AsymptoticHalfWidth(double lambda, double limit_l);

  // Time-varying limit factor L·√(λ/(2−λ)·(1 − (1−λ)^{2i})) for step i ≥ 1.
  static double LimitFactor(double lambda, double limit_l, int i);
  // Zero-state ARL (start at 0) with asymptotic limits when the mean is delta (σ units);
  // Brook–Evans chain with `cells` cells (odd, so that 0 is a cell midpoint).
  static double Arl(double lambda, double limit_l, double delta, int cells = 101);
  // L that gives in-control ARL `arl0` (Illinois root of ln Arl, `cells` cells).
  static double LimitForArl(double lambda, double arl0, int cells = 61);

  // Restart checkpoint (line_monitor_checkpoint.h): the running statistics as plain values;
  // RestoreState(SaveState()) then the same inputs gives the same outputs.
  struct State {
    double value = 0.0;
    long steps = 0;
  };
  State SaveState() const { return {value_, steps_}; }
  void RestoreState(const State& s) {
    value_ = s.value;
    steps_ = s.steps;
  }

 private:
  double lambda_;
  double limit_l_;
  double half_width_;  // HalfWidth(), fixed with λ and L: Update needs it every pack
  double value_ = 0.0;
  long steps_ = 0;
};

}  // namespace heft
