// head_comparison.h — do the filler heads differ? Per-head count, mean and sd, one-way
// ANOVA (F = between-head mean square / within-head mean square, p-value from the F
// distribution via Boost.Math), and the heads farthest from the line mean.
//
// Input is one MomentAccumulator per head (Welford sums: exact for 1e6-level weights);
// heads with no packs are ignored. Matches scipy.stats.f_oneway. Used by the spread and
// head detectors, reports and `heft stats --by-head`. Pure; thread-safe.
#pragma once

#include <span>

#include "core/stats/moments.h"
#include "core/stats/stats_types.h"

namespace heft {

struct HeadMoments {
  int head = -1;
  MomentAccumulator moments;
};

// F and p are empty with fewer than two heads, no within-head degrees of freedom, or no
// within-head spread.
HeadComparison CompareHeads(std::span<const HeadMoments> heads);

}  // namespace heft
