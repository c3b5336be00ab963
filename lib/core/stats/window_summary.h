// window_summary.h — builds WindowSummary values: from a series in time order (batch: a
// whole feed, a lot, a report period) and the order-statistics part for the sliding windows.
//
// Used by CountWindowStats, TimeWindowStats, `heft stats` and reports. Pure; thread-safe.
#pragma once

#include <span>

#include "core/stats/order_statistics.h"
#include "core/stats/stats_types.h"

namespace heft {

// All figures of `values` (oldest first; moving ranges follow that order). Moments by a
// Welford-style pass (MomentAccumulator); quantiles from a sorted copy.
WindowSummary SummarizeSeries(std::span<const double> values,
                              QuantileType type = QuantileType::kType7);

// Fills min, max, range, q1, median, q3 and quantile_type from `tree` (non-empty).
void FillOrderFields(const OrderStatistics& tree, QuantileType type, WindowSummary* summary);

}  // namespace heft
