#include "core/stats/box_plot.h"

#include "core/stats/quantile.h"

namespace heft {

BoxPlotData ComputeBoxPlot(std::span<const double> sorted, QuantileType type) {
  BoxPlotData box;
  box.quantile_type = type;
  box.count = sorted.size();
  if (sorted.empty()) return box;
  box.min = sorted.front();
  box.max = sorted.back();
  box.q1 = SortedQuantile(sorted, 0.25, type);
  box.median = SortedQuantile(sorted, 0.5, type);
  box.q3 = SortedQuantile(sorted, 0.75, type);
  box.iqr = box.q3 - box.q1;
  box.lower_fence = box.q1 - 1.5 * box.iqr;
  box.upper_fence = box.q3 + 1.5 * box.iqr;
  box.lower_outer_fence = box.q1 - 3.0 * box.iqr;
  box.upper_outer_fence = box.q3 + 3.0 * box.iqr;
  // Whiskers: the most extreme values still inside the inner fences. With quartiles from
  // interpolation a fence can never be passed by every value (q1 <= some datum <= q3),
  // so both whiskers always exist.
  std::size_t lo = 0;
  while (lo < sorted.size() && sorted[lo] < box.lower_fence) ++lo;
  std::size_t hi = sorted.size();
  while (hi > lo && sorted[hi - 1] > box.upper_fence) --hi;
  box.lower_whisker = sorted[lo];
  box.upper_whisker = sorted[hi - 1];
  for (std::size_t i = 0; i < lo; ++i) box.outliers.push_back(sorted[i]);
  for (std::size_t i = hi; i < sorted.size(); ++i) box.outliers.push_back(sorted[i]);
  for (double v : box.outliers) {
    if (v < box.lower_outer_fence || v > box.upper_outer_fence) ++box.far_out;
  }
  return box;
}

}  // namespace heft
