// plot_frame.h — the shared frame of heft's charts: plot area inside margins,
// value-to-pixel mapping, grid lines, tick labels, axis titles with units, the
// chart title, a legend row and the "no data" note.
//
// Used by run_chart, histogram_chart and box_plot_chart. Pure; thread-safe
// (values only; drawing goes into the caller's SvgWriter).
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "core/chart/nice_ticks.h"
#include "core/chart/svg_writer.h"

namespace heft::chart {

// Default chart size: 960 × 420 px prints at about 180 mm wide, so 13 px
// labels come out near 7 pt (legible at print size).
inline constexpr double kChartWidth = 960.0;
inline constexpr double kChartHeight = 420.0;
inline constexpr double kTickFont = 13.0;
inline constexpr double kTitleFont = 16.0;
inline constexpr double kAxisTitleFont = 14.0;

struct PlotFrame {
  double left = 78.0;  // room for y tick labels and the rotated y title
  double top = 58.0;   // chart title and legend row
  double right = 24.0;
  double bottom = 62.0;  // x tick labels and the x title
  double width = kChartWidth;
  double height = kChartHeight;
  double x_lo = 0.0, x_hi = 1.0;  // value range along x
  NiceAxis y;                     // value range along y

  double PlotLeft() const { return left; }
  double PlotRight() const { return width - right; }
  double PlotTop() const { return top; }
  double PlotBottom() const { return height - bottom; }
  double PlotWidth() const { return PlotRight() - PlotLeft(); }
  double PlotHeight() const { return PlotBottom() - PlotTop(); }
  // Value → pixel (clamped a little outside the plot so far values stay visible).
  double X(double value) const;
  double Y(double value) const;
};

struct LegendItem {
  enum class Swatch { kLine, kDashedLine, kBox, kHatch, kCircle, kTriangle, kDiamond, kCross };
  Swatch swatch = Swatch::kLine;
  std::string colour;
  std::string label;
  std::string dash;  // for kDashedLine
};

// Chart title (left, bold) at the top.
void DrawTitle(SvgWriter& svg, const PlotFrame& frame, std::string_view title);
// Horizontal grid lines and y tick labels, the y axis title rotated.
void DrawYAxis(SvgWriter& svg, const PlotFrame& frame, std::string_view title);
// Vertical ticks and labels along x for numeric values, and the x title.
void DrawXAxisNumeric(SvgWriter& svg, const PlotFrame& frame, const NiceAxis& axis,
                      std::string_view title);
// The same for clock times (frame.x_lo/x_hi are epoch ms).
void DrawXAxisTime(SvgWriter& svg, const PlotFrame& frame, const TimeAxis& axis,
                   std::string_view title);
// Category labels centred under each slot (slot i spans [i, i + 1) in x units).
void DrawXAxisCategories(SvgWriter& svg, const PlotFrame& frame,
                         const std::vector<std::string>& labels, std::string_view title);
// The plot border.
void DrawPlotBorder(SvgWriter& svg, const PlotFrame& frame);
// Legend rows under the title from the plot's left edge, wrapping at the
// chart's right edge; LegendRows says how many rows that takes (callers move
// frame.top down by kLegendRowHeight per extra row before drawing).
inline constexpr double kLegendRowHeight = 17.0;
int LegendRows(const PlotFrame& frame, const std::vector<LegendItem>& items);
void DrawLegend(SvgWriter& svg, const PlotFrame& frame, const std::vector<LegendItem>& items);
// A centred note in the plot area ("No packs in this range").
void DrawNote(SvgWriter& svg, const PlotFrame& frame, std::string_view note);

// Marker shapes (state shown by shape as well as colour).
void DrawTriangle(SvgWriter& svg, double cx, double cy, double r, const Paint& paint,
                  std::string_view css_class, std::string_view extra_attributes = {});
void DrawDiamond(SvgWriter& svg, double cx, double cy, double r, const Paint& paint,
                 std::string_view css_class, std::string_view extra_attributes = {});
void DrawCross(SvgWriter& svg, double cx, double cy, double r, const std::string& colour,
               std::string_view css_class, std::string_view extra_attributes = {});

// The settling hatch pattern's id ("hatch-settling"); call once per SVG before use.
void DefineHatch(SvgWriter& svg);
inline constexpr const char* kHatchFill = "url(#hatch-settling)";

}  // namespace heft::chart
