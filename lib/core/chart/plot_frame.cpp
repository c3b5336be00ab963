// plot_frame.cpp — axes, grid, titles and legend shared by the charts.
#include "core/chart/plot_frame.h"

#include <algorithm>
#include <cmath>

#include "core/chart/palette.h"

namespace heft::chart {

double PlotFrame::X(double value) const {
  const double span = x_hi - x_lo;
  const double x = span > 0.0 ? PlotLeft() + (value - x_lo) / span * PlotWidth() : PlotLeft();
  return std::clamp(x, PlotLeft() - 8.0, PlotRight() + 8.0);
}

double PlotFrame::Y(double value) const {
  const double span = y.hi - y.lo;
  const double yy = span > 0.0 ? PlotBottom() - (value - y.lo) / span * PlotHeight() : PlotBottom();
  return std::clamp(yy, PlotTop() - 8.0, PlotBottom() + 8.0);
}

void DrawTitle(SvgWriter& svg, const PlotFrame& frame, std::string_view title) {
  TextStyle style;
  style.size = kTitleFont;
  style.bold = true;
  style.colour = kInk;
  svg.Text(frame.PlotLeft(), 22.0, title, style, "chart-title");
}

void DrawYAxis(SvgWriter& svg, const PlotFrame& frame, std::string_view title) {
  svg.BeginGroup("y-axis");
  const Paint grid{kGrid, "", 1.0, "", 1.0};
  TextStyle label;
  label.size = kTickFont;
  label.colour = kInkSoft;
  label.anchor = Anchor::kEnd;
  for (double tick : frame.y.ticks) {
    const double y = frame.Y(tick);
    svg.Line(frame.PlotLeft(), y, frame.PlotRight(), y, grid, "grid");
    svg.Text(frame.PlotLeft() - 7.0, y + 4.5, FormatNumber(tick, frame.y.decimals), label,
             "tick-label y-tick");
  }
  TextStyle axis_title;
  axis_title.size = kAxisTitleFont;
  axis_title.colour = kInk;
  axis_title.anchor = Anchor::kMiddle;
  axis_title.rotate = -90.0;
  svg.Text(18.0, frame.PlotTop() + frame.PlotHeight() / 2.0, title, axis_title, "axis-title");
  svg.EndGroup();
}

namespace {
void XTitle(SvgWriter& svg, const PlotFrame& frame, std::string_view title) {
  TextStyle axis_title;
  axis_title.size = kAxisTitleFont;
  axis_title.colour = kInk;
  axis_title.anchor = Anchor::kMiddle;
  svg.Text(frame.PlotLeft() + frame.PlotWidth() / 2.0, frame.height - 12.0, title, axis_title,
           "axis-title");
}
}  // namespace

void DrawXAxisNumeric(SvgWriter& svg, const PlotFrame& frame, const NiceAxis& axis,
                      std::string_view title) {
  svg.BeginGroup("x-axis");
  const Paint tick_paint{kInk, "", 1.0, "", 1.0};
  TextStyle label;
  label.size = kTickFont;
  label.colour = kInkSoft;
  label.anchor = Anchor::kMiddle;
  for (double tick : axis.ticks) {
    const double x = frame.X(tick);
    svg.Line(x, frame.PlotBottom(), x, frame.PlotBottom() + 5.0, tick_paint, "tick");
    svg.Text(x, frame.PlotBottom() + 20.0, FormatNumber(tick, axis.decimals), label,
             "tick-label x-tick");
  }
  XTitle(svg, frame, title);
  svg.EndGroup();
}

void DrawXAxisTime(SvgWriter& svg, const PlotFrame& frame, const TimeAxis& axis,
                   std::string_view title) {
  svg.BeginGroup("x-axis");
  const Paint tick_paint{kInk, "", 1.0, "", 1.0};
  const Paint grid{kGrid, "", 1.0, "", 1.0};
  TextStyle label;
  label.size = kTickFont;
  label.colour = kInkSoft;
  label.anchor = Anchor::kMiddle;
  for (std::size_t i = 0; i < axis.ticks.size(); ++i) {
    const double x = frame.X(static_cast<double>(axis.ticks[i]));
    svg.Line(x, frame.PlotTop(), x, frame.PlotBottom(), grid, "grid");
    svg.Line(x, frame.PlotBottom(), x, frame.PlotBottom() + 5.0, tick_paint, "tick");
    svg.Text(x, frame.PlotBottom() + 20.0, axis.labels[i], label, "tick-label x-tick");
  }
  XTitle(svg, frame, title);
  svg.EndGroup();
}

void DrawXAxisCategories(SvgWriter& svg, const PlotFrame& frame,
                         const std::vector<std::string>& labels, std::string_view title) {
  svg.BeginGroup("x-axis");
  TextStyle label;
  label.size = kTickFont;
  label.colour = kInkSoft;
  label.anchor = Anchor::kMiddle;
  // Long or many labels are turned so they do not overlap.
  const double slot = labels.empty() ? frame.PlotWidth() : frame.PlotWidth() / labels.size();
  std::size_t longest = 0;
  for (const auto& text : labels) longest = std::max(longest, text.size());
  const bool turn = static_cast<double>(longest) * kTickFont * 0.6 > slot;
  if (turn) {
    label.anchor = Anchor::kEnd;
    label.rotate = -30.0;
  }
  for (std::size_t i = 0; i < labels.size(); ++i) {
    const double x = frame.X(static_cast<double>(i) + 0.5);
    std::string text = labels[i];
    if (turn && text.size() > 18) text = text.substr(0, 17) + "…";
    svg.Text(x, frame.PlotBottom() + 18.0, text, label, "tick-label x-tick");
  }
  XTitle(svg, frame, title);
  svg.EndGroup();
}

void DrawPlotBorder(SvgWriter& svg, const PlotFrame& frame) {
  svg.Rect(frame.PlotLeft(), frame.PlotTop(), frame.PlotWidth(), frame.PlotHeight(),
           Paint{kInk, "", 1.0, "", 1.0}, "plot-border");
}

namespace {
double LegendItemWidth(const LegendItem& item) {
  return 27.0 + static_cast<double>(item.label.size()) * (kTickFont - 1.0) * 0.58 + 18.0;
}
}  // namespace

int LegendRows(const PlotFrame& frame, const std::vector<LegendItem>& items) {
  int rows = items.empty() ? 0 : 1;
  double x = frame.PlotLeft();
  for (const LegendItem& item : items) {
    const double w = LegendItemWidth(item);
    if (x + w - 18.0 > frame.width - 8.0 && x > frame.PlotLeft()) {
      ++rows;
      x = frame.PlotLeft();
    }
    x += w;
  }
  return rows;
}

void DrawLegend(SvgWriter& svg, const PlotFrame& frame, const std::vector<LegendItem>& items) {
  if (items.empty()) return;
  svg.BeginGroup("legend");
  TextStyle label;
  label.size = kTickFont - 1.0;
  label.colour = kInk;
  double x = frame.PlotLeft();
  double y = 42.0;
  for (const LegendItem& item : items) {
    const double w = LegendItemWidth(item);
    if (x + w - 18.0 > frame.width - 8.0 && x > frame.PlotLeft()) {
      y += kLegendRowHeight;
      x = frame.PlotLeft();
    }
    const Paint line{item.colour, "", 2.0, item.dash, 1.0};
    switch (item.swatch) {
      case LegendItem::Swatch::kLine:
      case LegendItem::Swatch::kDashedLine:
        svg.Line(x, y, x + 22.0, y, line);
        break;
      case LegendItem::Swatch::kBox:
        svg.Rect(x + 3.0, y - 6.0, 16.0, 12.0, Paint{kInk, item.colour, 1.0, "", 1.0});
        break;
      case LegendItem::Swatch::kHatch:
        svg.Rect(x + 3.0, y - 6.0, 16.0, 12.0, Paint{kInkSoft, kHatchFill, 1.0, "", 1.0});
        break;
      case LegendItem::Swatch::kCircle:
        svg.Circle(x + 11.0, y, 4.5, Paint{item.colour, item.colour, 1.0, "", 1.0});
        break;
      case LegendItem::Swatch::kTriangle:
        DrawTriangle(svg, x + 11.0, y, 6.0, Paint{item.colour, item.colour, 1.0, "", 1.0}, "");
        break;
      case LegendItem::Swatch::kDiamond:
        DrawDiamond(svg, x + 11.0, y, 6.0, Paint{item.colour, item.colour, 1.0, "", 1.0}, "");
        break;
      case LegendItem::Swatch::kCross:
        DrawCross(svg, x + 11.0, y, 5.0, item.colour, "");
        break;
    }
    svg.Text(x + 27.0, y + 4.5, item.label, label, "legend-label");
    x += w;
  }
  svg.EndGroup();
}

void DrawNote(SvgWriter& svg, const PlotFrame& frame, std::string_view note) {
  TextStyle style;
  style.size = kAxisTitleFont;
  style.colour = kInkSoft;
  style.anchor = Anchor::kMiddle;
  svg.Text(frame.PlotLeft() + frame.PlotWidth() / 2.0, frame.PlotTop() + frame.PlotHeight() / 2.0,
           note, style, "note");
}

void DrawTriangle(SvgWriter& svg, double cx, double cy, double r, const Paint& paint,
                  std::string_view css_class, std::string_view extra_attributes) {
  svg.Polygon({{cx, cy - r}, {cx + r * 0.87, cy + r * 0.5}, {cx - r * 0.87, cy + r * 0.5}}, paint,
              css_class, extra_attributes);
}

void DrawDiamond(SvgWriter& svg, double cx, double cy, double r, const Paint& paint,
                 std::string_view css_class, std::string_view extra_attributes) {
  svg.Polygon({{cx, cy - r}, {cx + r, cy}, {cx, cy + r}, {cx - r, cy}}, paint, css_class,
              extra_attributes);
}

void DrawCross(SvgWriter& svg, double cx, double cy, double r, const std::string& colour,
               std::string_view css_class, std::string_view extra_attributes) {
  // Appended piecewise: GCC 12 warns falsely (-Wrestrict) on "M" + std::string.
  std::string d;
  const auto point = [&d](char op, double x, double y) {
    d += op;
    d += Coord(x);
    d += ' ';
    d += Coord(y);
  };
  point('M', cx - r, cy - r);
  point('L', cx + r, cy + r);
  point('M', cx - r, cy + r);
  point('L', cx + r, cy - r);
  svg.Path(d, Paint{colour, "", 2.0, "", 1.0}, css_class, extra_attributes);
}

void DefineHatch(SvgWriter& svg) {
  svg.Def(std::string("<pattern id=\"hatch-settling\" width=\"8\" height=\"8\" "
                      "patternUnits=\"userSpaceOnUse\" patternTransform=\"rotate(45)\">"
                      "<rect width=\"8\" height=\"8\" fill=\"#f1f2f4\"/>"
                      "<line x1=\"0\" y1=\"0\" x2=\"0\" y2=\"8\" stroke=\"") +
          kSettling + "\" stroke-width=\"2.5\"/></pattern>");
}

}  // namespace heft::chart
