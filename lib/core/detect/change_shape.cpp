#include "core/detect/change_shape.h"

#include <vector>

namespace heft {

ChangeShape FitChangeShape(std::span<const double> y, double margin, std::size_t min_ramp) {
  ChangeShape r;
  const std::size_t n = y.size();
  if (n < 3) return r;
  // Suffix sums from the back: Σy, Σt·y and Σy², accumulated on the fly.
  double suf_y = 0.0, suf_ty = 0.0, total_sq = 0.0;
  for (double v : y) total_sq += v * v;
  r.sse_none = total_sq;
  r.sse_step = total_sq;
  r.sse_ramp = total_sq;
  for (std::size_t k = n; k-- > 0;) {
    const double t = static_cast<double>(k);
    suf_y += y[k];
    suf_ty += t * y[k];
    const double m = static_cast<double>(n - k);
    if (k + 1 >= n) continue;  // at least two samples after the change
    // Step at τ = k.
    const double sse_step = total_sq - suf_y * suf_y / m;
    if (sse_step < r.sse_step) {
      r.sse_step = sse_step;
      r.step_at = k;
      r.step_size = suf_y / m;
    }
    // Ramp from τ = k: x_t = t − k + 1 for t ≥ k; Σy·x = Σty − (k − 1)Σy; Σx² = m(m+1)(2m+1)/6.
    const double sxy = suf_ty - (t - 1.0) * suf_y;
    const double sxx = m * (m + 1.0) * (2.0 * m + 1.0) / 6.0;
    const double sse_ramp = total_sq - sxy * sxy / sxx;
    if (sse_ramp < r.sse_ramp) {
      r.sse_ramp = sse_ramp;
      r.ramp_at = k;
      r.slope = sxy / sxx;
    }
  }
  r.ramp = r.sse_step - r.sse_ramp > margin && n - r.ramp_at >= min_ramp;
  return r;
}

}  // namespace heft
