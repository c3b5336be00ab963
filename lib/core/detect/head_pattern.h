// head_pattern.h — which repeating pattern across a filler's heads explains the
// per-head means: every other head (period 2), every third, …, or one head alone.
//
// Used by LineMonitor when a head CUSUM fires, to report the period of what it saw:
// alternating packs on an even filler look like every other head off, one bad head
// gives a period of the head count. Pure; no state.
#pragma once

#include <span>

namespace heft {

// Per-head sums of a standardised residual over a window: n and Σz per head.
struct HeadSums {
  std::span<const double> count;
  std::span<const double> sum;
};

// The smallest divisor P < heads of the head count whose P-periodic pattern (one
// mean per class h mod P) leaves less than kHeadPatternUnexplained of the spread of
// the per-head means about their grand mean; none such, or a head with no packs: the
// head count.
inline constexpr double kHeadPatternUnexplained = 0.25;
int HeadPatternPeriod(const HeadSums& sums);

}  // namespace heft
