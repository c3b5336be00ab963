// histogram_chart.cpp — histogram bars and reference lines.
#include "core/chart/histogram_chart.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/chart/palette.h"
#include "core/chart/plot_frame.h"
#include "core/chart/svg_writer.h"

namespace heft::chart {

std::string RenderHistogramChart(const HistogramChartInput& input) {
  SvgWriter svg(input.width, input.height, input.title);
  PlotFrame frame;
  frame.width = input.width;
  frame.height = input.height;
  frame.top = 76.0;  // title, legend and the bin-rule line

  const HistogramData& h = input.histogram;
  const bool has_bins = h.count > 0 && h.edges.size() == h.counts.size() + 1 && !h.counts.empty();
  double x_min = std::numeric_limits<double>::infinity();
  double x_max = -x_min;
  if (has_bins) {
    x_min = h.edges.front();
    x_max = h.edges.back();
  }
  for (const RefLine& ref : input.refs) {
    x_min = std::min(x_min, ref.value);
    x_max = std::max(x_max, ref.value);
  }
  if (!std::isfinite(x_min)) {
    x_min = 0.0;
    x_max = 1.0;
  }
  // Half a bin of room either side so edge bars do not touch the frame.
  const double pad = has_bins ? h.width * 0.5 : 0.0;
  const NiceAxis x_axis = MakeNiceAxis(x_min - pad, x_max + pad, 9);
  frame.x_lo = x_axis.lo;
  frame.x_hi = x_axis.hi;
  std::size_t peak = 0;
  for (std::size_t c : h.counts) peak = std::max(peak, c);
  frame.y = MakeNiceAxis(0.0, std::max<double>(static_cast<double>(peak), 1.0), 6);
  frame.y.decimals = 0;
  if (frame.y.step < 1.0) {  // counts are whole numbers
    frame.y = MakeNiceAxis(0.0, std::max<double>(static_cast<double>(peak), 4.0), 5);
  }

  std::vector<LegendItem> legend = {{LegendItem::Swatch::kBox, kDataFill, "packs per bin", ""}};
  for (const RefLine& ref : input.refs) {
    legend.push_back(
        {ref.dash.empty() ? LegendItem::Swatch::kLine : LegendItem::Swatch::kDashedLine, ref.colour,
         ref.label, ref.dash});
  }
  const double extra = kLegendRowHeight * (LegendRows(frame, legend) - 1);
  frame.top += extra;
  DrawTitle(svg, frame, input.title);
  DrawLegend(svg, frame, legend);
  TextStyle sub;
  sub.size = kTickFont - 1.0;
  sub.colour = kInkSoft;
  svg.Text(frame.PlotLeft(), 64.0 + extra, input.rule_text, sub, "bin-rule");

  DrawYAxis(svg, frame, input.y_title);
  DrawXAxisNumeric(svg, frame, x_axis, input.x_title);

  svg.BeginGroup("bars");
  if (!has_bins) {
    DrawNote(svg, frame, "No packs in this range");
  } else {
    for (std::size_t i = 0; i < h.counts.size(); ++i) {
      const double x1 = frame.X(h.edges[i]);
      const double x2 = frame.X(h.edges[i + 1]);
      const double y = frame.Y(static_cast<double>(h.counts[i]));
      svg.Rect(x1, y, x2 - x1, frame.PlotBottom() - y, Paint{kData, kDataFill, 1.0, "", 1.0}, "bar",
               "data-count=\"" + std::to_string(h.counts[i]) + "\" data-from=\"" +
                   Coord(h.edges[i]) + "\" data-to=\"" + Coord(h.edges[i + 1]) + "\"");
    }
  }
  svg.EndGroup();

  if (!input.refs.empty()) {
    svg.BeginGroup("references");
    TextStyle label;
    label.size = kTickFont - 1.0;
    label.anchor = Anchor::kMiddle;
    int row = 0;
    for (const RefLine& ref : input.refs) {
      const double x = frame.X(ref.value);
      svg.Line(x, frame.PlotTop(), x, frame.PlotBottom(), Paint{ref.colour, "", 2.0, ref.dash, 1.0},
               "ref " + ref.css_class, "data-value=\"" + Coord(ref.value) + "\"");
      label.colour = ref.colour;
      label.anchor = x > frame.PlotRight() - 200.0 ? Anchor::kEnd : Anchor::kStart;
      svg.Text(x + (label.anchor == Anchor::kEnd ? -5.0 : 5.0),
               frame.PlotTop() + 14.0 + 14.0 * (row++ % 3), ref.label, label, "ref-label");
    }
    svg.EndGroup();
  }
  DrawPlotBorder(svg, frame);
  return svg.Finish();
}

}  // namespace heft::chart
