// illinois_root.h — the root of an increasing function on a bracket, by the Illinois
// method (regula falsi with the stale end's value halved; Dowell & Jarratt 1971).
//
// The ARL design solves (ln ARL(x) − ln target = 0) are smooth and nearly linear in
// x, so this takes a handful of evaluations where bisection to the same tolerance
// takes forty; each evaluation is a whole ARL solve. Pure.
#pragma once

#include <cmath>
#include <functional>

namespace heft {

// Root of f (increasing) in [lo, hi] with f(lo) < 0 < f(hi), to `tolerance` in x or
// |f| < 1e-12, whichever comes first.
inline double IllinoisRoot(const std::function<double(double)>& f, double lo, double f_lo,
                           double hi, double f_hi, double tolerance) {
  int side = 0;
  double x = lo;
  for (int iteration = 0; iteration < 100 && hi - lo > tolerance; ++iteration) {
    x = (lo * f_hi - hi * f_lo) / (f_hi - f_lo);
    if (!(x > lo && x < hi)) x = 0.5 * (lo + hi);
    const double fx = f(x);
    if (fx == 0.0) return x;
    if (fx < 0.0) {
      lo = x, f_lo = fx;
      if (side == -1) f_hi *= 0.5;
      side = -1;
    } else {
      hi = x, f_hi = fx;
      if (side == +1) f_lo *= 0.5;
      side = +1;
    }
    if (std::fabs(fx) < 1e-12) return x;
  }
  return x;
}

// ln(arl) − ln(target), the function those solves take the root of; a non-finite or
// non-positive ARL (a limit far too wide for the arithmetic) counts as far too large.
inline double LogArlGap(double arl, double target) {
  if (!std::isfinite(arl) || !(arl > 0.0)) return 1e3;
  return std::log(arl) - std::log(target);
}

}  // namespace heft
