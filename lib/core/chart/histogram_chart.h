// histogram_chart.h — a histogram of pack weights from the statistics engine's
// HistogramData (bins from a named rule, 1-2-5 widths), with the rule named in
// the subtitle and vertical reference lines (nominal, nominal − TNE,
// nominal − 2 TNE) told apart by dash style as well as colour.
//
// Used by the HTML report and `heft report --svg histogram`. Pure; thread-safe.
#pragma once

#include <string>
#include <vector>

#include "core/chart/run_chart.h"
#include "core/stats/stats_types.h"

namespace heft::chart {

struct HistogramChartInput {
  std::string title;
  std::string x_title = "net weight (g)";
  std::string y_title = "packs";
  HistogramData histogram;
  std::string rule_text;      // "square-root rule: 12 bins of 0.5 g", shown in the chart
  std::vector<RefLine> refs;  // vertical lines
  double width = 960.0;
  double height = 420.0;
};

std::string RenderHistogramChart(const HistogramChartInput& input);

}  // namespace heft::chart
