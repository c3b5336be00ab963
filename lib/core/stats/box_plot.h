// box_plot.h — box-plot data: five-number summary, Tukey fences at 1.5 IQR (inner) and
// 3 IQR (outer), whisker ends at the most extreme data inside the inner fences, and the
// values outside (Tukey, Exploratory Data Analysis, 1977 — common practice;
// check-values.md §6.2). Quartiles by the chosen H&F type (quantile.h).
//
// Used by `heft stats`, reports and the live page. Pure; thread-safe.
#pragma once

#include <span>

#include "core/stats/stats_types.h"

namespace heft {

// `sorted` ascending; an empty input gives count 0 and zeros.
BoxPlotData ComputeBoxPlot(std::span<const double> sorted,
                           QuantileType type = QuantileType::kType7);

}  // namespace heft
