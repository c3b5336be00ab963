// settle_fit.h — where did a start-up transient end? MSER-5 plus a fitted decay.
//
// A band rule on a moving average stops too early on a slow approach, and MSER-5
// alone cuts where the transient sinks into the noise, not where it has settled.
// So, on the series since the start (pack 0 = the start):
//   1. MSER-5 cut d₀ (White, Cobb & Spratt 2000; check-values.md §5.1).
//   2. Least-squares fits, each with the settled level L fitted jointly:
//        none:          x = L
//        first order:   x = L + A·e^{−t/τ}                    (grid over τ)
//        under-damped:  x = L + e^{−αt}(a·cos ωt + b·sin ωt)  (grid over α and ω)
//      chosen by BIC = n·ln(SSE/n) + p·ln n with p = 1, 3, 5.
//   3. Settle point = the 2 % settling time of the chosen model (common practice,
//      check-values.md §5.2): 4τ, or 4/α (= 4/(ζωₙ)); for "none", the MSER-5 cut.
// `settled` is false while the series does not yet hold `min_after` values past the
// settle point (or MSER's cut sits at its search limit with no model to explain it).
// Used by LineMonitor once per settling attempt. Pure; O(n·grid); allocates.
#pragma once

#include <cstddef>
#include <span>

namespace heft {

enum class SettleModel { kNone, kFirstOrder, kUnderdamped };

struct SettleEstimate {
  bool settled = false;
  std::size_t settle_at = 0;  // index of the first settled value
  std::size_t mser_cut = 0;
  SettleModel model = SettleModel::kNone;
  double level = 0.0;      // fitted settled level
  double amplitude = 0.0;  // A, or |(a, b)| for the under-damped fit
  double tau = 0.0;        // first order: τ; under-damped: 1/α
  double period = 0.0;     // under-damped: 2π/ω (damped period), samples
};

SettleEstimate EstimateSettling(std::span<const double> series, std::size_t min_after);

}  // namespace heft
