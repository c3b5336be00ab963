// change_shape.h — was a change in the mean a step or a ramp?
//
// Given deviations y₀…yₙ₋₁ from the in-control level (in-control mean 0), fits by
// least squares, each over the best change point τ:
//   step:  y = 0 before τ, c after;          ramp:  y = 0 before τ, s·(t − τ + 1) after.
// Both fits have two parameters (τ and c or s), so the BIC comparison reduces to the
// smaller residual sum of squares; `margin` (≥ 0, in units of y², i.e. of the noise
// variance when y is standardised) asks the ramp to beat the step by that much
// (abrupt changes are the prior), and a ramp must have lasted `min_ramp` samples.
// O(n) with suffix sums.
// Used by LineMonitor when the CUSUM or the EWMA signals. Pure function.
#pragma once

#include <cstddef>
#include <span>

namespace heft {

struct ChangeShape {
  bool ramp = false;
  std::size_t step_at = 0;  // best step change point (first changed sample)
  std::size_t ramp_at = 0;  // best ramp start
  double step_size = 0.0;   // c, units of y
  double slope = 0.0;       // s, units of y per sample
  double sse_none = 0.0;
  double sse_step = 0.0;
  double sse_ramp = 0.0;
  // Convenience: where the chosen shape starts and the change so far at the last sample.
  std::size_t ChangeAt() const { return ramp ? ramp_at : step_at; }
};

ChangeShape FitChangeShape(std::span<const double> y, double margin = 0.0,
                           std::size_t min_ramp = 0);

}  // namespace heft
