// box_plot_chart.h — side-by-side box plots (by filler head, by work shift or
// by lot) from the statistics engine's BoxPlotData: box from Q1 to Q3, median
// bar, Tukey whiskers to the most extreme data inside the inner fences, and
// the outliers beyond them (circles; far-out values beyond the outer fences as
// filled diamonds, so the two differ by shape). An optional horizontal
// reference line (e.g. nominal − TNE).
//
// Used by the HTML report and `heft report --svg boxplot-*`. Pure; thread-safe.
#pragma once

#include <string>
#include <vector>

#include "core/chart/run_chart.h"
#include "core/stats/stats_types.h"

namespace heft::chart {

struct BoxGroup {
  std::string label;  // "head 3", "06–14", "lot 7"
  BoxPlotData box;
};

struct BoxPlotChartInput {
  std::string title;
  std::string x_title;  // "filler head"
  std::string y_title = "net weight (g)";
  std::vector<BoxGroup> groups;
  std::vector<RefLine> refs;  // horizontal lines
  double width = 960.0;
  double height = 420.0;
  std::size_t max_outliers_drawn = 200;  // per group; the rest are counted in the tooltip
};

std::string RenderBoxPlotChart(const BoxPlotChartInput& input);

}  // namespace heft::chart
