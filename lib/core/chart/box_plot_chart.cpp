// box_plot_chart.cpp — box plot drawing.
#include "core/chart/box_plot_chart.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/chart/palette.h"
#include "core/chart/plot_frame.h"
#include "core/chart/svg_writer.h"

namespace heft::chart {

std::string RenderBoxPlotChart(const BoxPlotChartInput& input) {
  SvgWriter svg(input.width, input.height, input.title);
  PlotFrame frame;
  frame.width = input.width;
  frame.height = input.height;
  frame.bottom = 78.0;  // room for turned category labels

  double y_min = std::numeric_limits<double>::infinity();
  double y_max = -y_min;
  for (const BoxGroup& g : input.groups) {
    if (g.box.count == 0) continue;
    y_min = std::min(y_min, g.box.min);
    y_max = std::max(y_max, g.box.max);
  }
  for (const RefLine& ref : input.refs) {
    y_min = std::min(y_min, ref.value);
    y_max = std::max(y_max, ref.value);
  }
  if (!std::isfinite(y_min)) {
    y_min = 0.0;
    y_max = 1.0;
  }
  frame.y = MakeNiceAxis(y_min, y_max, 7);
  frame.x_lo = 0.0;
  frame.x_hi = std::max<double>(1.0, static_cast<double>(input.groups.size()));

  std::vector<LegendItem> legend = {
      {LegendItem::Swatch::kBox, kDataFill, "Q1–Q3, median bar", ""},
      {LegendItem::Swatch::kLine, kData, "whiskers (Tukey, 1.5 IQR)", ""},
      {LegendItem::Swatch::kCircle, kOutlier, "outlier", ""},
      {LegendItem::Swatch::kDiamond, kOutlier, "far out (beyond 3 IQR)", ""},
  };
  for (const RefLine& ref : input.refs) {
    legend.push_back(
        {ref.dash.empty() ? LegendItem::Swatch::kLine : LegendItem::Swatch::kDashedLine, ref.colour,
         ref.label, ref.dash});
  }
  frame.top += kLegendRowHeight * (LegendRows(frame, legend) - 1);
  DrawTitle(svg, frame, input.title);
  DrawLegend(svg, frame, legend);
  DrawYAxis(svg, frame, input.y_title);
  std::vector<std::string> labels;
  for (const BoxGroup& g : input.groups) labels.push_back(g.label);
  DrawXAxisCategories(svg, frame, labels, input.x_title);

  if (input.groups.empty()) DrawNote(svg, frame, "No packs in this range");
  const double slot = frame.PlotWidth() / std::max<double>(1.0, input.groups.size());
  const double half = std::clamp(slot * 0.3, 3.0, 40.0);
  const Paint box_paint{kData, kDataFill, 1.5, "", 1.0};
  const Paint whisker{kData, "", 1.5, "", 1.0};
  for (std::size_t i = 0; i < input.groups.size(); ++i) {
    const BoxPlotData& b = input.groups[i].box;
    const double cx = frame.X(static_cast<double>(i) + 0.5);
    svg.BeginGroup("box-group", "data-label=\"" + EscapeXml(input.groups[i].label) +
                                    "\" data-count=\"" + std::to_string(b.count) + "\"");
    svg.Title(input.groups[i].label + ": n " + std::to_string(b.count) + ", median " +
              FormatNumber(b.median, 2) + " g, IQR " + FormatNumber(b.iqr, 2) + " g, " +
              std::to_string(b.outliers.size()) + " outliers");
    if (b.count == 0) {
      svg.EndGroup();
      continue;
    }
    const double y_q1 = frame.Y(b.q1), y_q3 = frame.Y(b.q3), y_med = frame.Y(b.median);
    svg.Line(cx, frame.Y(b.upper_whisker), cx, y_q3, whisker, "whisker");
    svg.Line(cx, y_q1, cx, frame.Y(b.lower_whisker), whisker, "whisker");
    svg.Line(cx - half * 0.5, frame.Y(b.upper_whisker), cx + half * 0.5, frame.Y(b.upper_whisker),
             whisker, "whisker-cap");
    svg.Line(cx - half * 0.5, frame.Y(b.lower_whisker), cx + half * 0.5, frame.Y(b.lower_whisker),
             whisker, "whisker-cap");
    svg.Rect(cx - half, y_q3, 2.0 * half, std::max(y_q1 - y_q3, 1.0), box_paint, "box");
    svg.Line(cx - half, y_med, cx + half, y_med, Paint{kInk, "", 2.5, "", 1.0}, "median");
    std::size_t drawn = 0;
    for (double v : b.outliers) {
      if (drawn++ >= input.max_outliers_drawn) break;
      const bool far = v < b.lower_outer_fence || v > b.upper_outer_fence;
      if (far) {
        DrawDiamond(svg, cx, frame.Y(v), 4.5, Paint{kOutlier, kOutlier, 1.0, "", 1.0},
                    "outlier far-out");
      } else {
        svg.Circle(cx, frame.Y(v), 3.5, Paint{kOutlier, "#ffffff", 1.5, "", 1.0}, "outlier");
      }
    }
    svg.EndGroup();
  }
  if (!input.refs.empty()) {
    svg.BeginGroup("references");
    TextStyle label;
    label.size = kTickFont - 1.0;
    label.anchor = Anchor::kEnd;
    for (const RefLine& ref : input.refs) {
      const double y = frame.Y(ref.value);
      svg.Line(frame.PlotLeft(), y, frame.PlotRight(), y, Paint{ref.colour, "", 2.0, ref.dash, 1.0},
               "ref " + ref.css_class, "data-value=\"" + Coord(ref.value) + "\"");
      label.colour = ref.colour;
      svg.Text(frame.PlotRight() - 4.0, y - 5.0, ref.label, label, "ref-label");
    }
    svg.EndGroup();
  }
  DrawPlotBorder(svg, frame);
  return svg.Finish();
}

}  // namespace heft::chart
