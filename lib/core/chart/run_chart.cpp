// run_chart.cpp — run chart drawing and per-column down-sampling.
#include "core/chart/run_chart.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/chart/palette.h"
#include "core/chart/plot_frame.h"
#include "core/chart/svg_writer.h"

namespace heft::chart {
namespace {

struct Column {
  double min = std::numeric_limits<double>::infinity();
  double max = -std::numeric_limits<double>::infinity();
  std::size_t count = 0;
};

const char* SeverityColour(int severity) {
  return severity >= 2 ? kAlarm : severity == 1 ? kWarning : kInfo;
}

void DrawZones(SvgWriter& svg, const PlotFrame& frame, double centre, double sigma) {
  svg.BeginGroup("zones");
  const char* fills[3] = {kZone1, kZone2, kZone3};
  for (int k = 3; k >= 1; --k) {
    const double top = frame.Y(centre + k * sigma);
    const double bottom = frame.Y(centre - k * sigma);
    svg.Rect(frame.PlotLeft(), top, frame.PlotWidth(), bottom - top,
             Paint{"", fills[k - 1], 1.0, "", 1.0}, "zone zone-" + std::to_string(k));
  }
  TextStyle label;
  label.size = kTickFont - 2.0;
  label.colour = kInkSoft;
  for (int k = -2; k <= 2; ++k) {
    if (k == 0) continue;
    const double y = frame.Y(centre + k * sigma);
    svg.Line(frame.PlotLeft(), y, frame.PlotRight(), y, Paint{kGrid, "", 1.0, "2 3", 1.0},
             "zone-line");
    if (std::abs(frame.Y(centre) - frame.Y(centre + sigma)) >= 12.0) {
      svg.Text(frame.PlotRight() + 4.0, y + 4.0,
               (k > 0 ? "+" : "−") + std::to_string(std::abs(k)) + "σ", label, "zone-label");
    }
  }
  svg.EndGroup();
}

}  // namespace

std::string RenderRunChart(const RunChartInput& input, RunChartStats* stats) {
  RunChartStats local_stats;
  RunChartStats& st = stats != nullptr ? *stats : local_stats;
  st = RunChartStats();

  SvgWriter svg(input.width, input.height, input.title);
  DefineHatch(svg);
  PlotFrame frame;
  frame.width = input.width;
  frame.height = input.height;
  frame.right = 92.0;  // limit and zone labels

  // x range: what was asked for, else the data's.
  std::int64_t lo = 0, hi = 0;
  if (!input.points.empty()) {
    lo = input.points.front().time_ms;
    hi = input.points.back().time_ms;
    for (const RunPoint& p : input.points) {
      lo = std::min(lo, p.time_ms);
      hi = std::max(hi, p.time_ms);
    }
  }
  if (input.from_ms) lo = *input.from_ms;
  if (input.to_ms) hi = *input.to_ms;
  if (input.points.empty() && !input.from_ms && !input.to_ms && !input.events.empty()) {
    lo = input.events.front().time_ms;
    hi = input.events.back().time_ms;
  }
  const TimeAxis time_axis = MakeTimeAxis(lo, hi, 8, input.offset_minutes);
  frame.x_lo = static_cast<double>(time_axis.lo_ms);
  frame.x_hi = static_cast<double>(time_axis.hi_ms);

  // y range: data, limits and reference lines.
  double y_min = std::numeric_limits<double>::infinity();
  double y_max = -y_min;
  for (const RunPoint& p : input.points) {
    if (!std::isfinite(p.grams)) continue;
    y_min = std::min(y_min, p.grams);
    y_max = std::max(y_max, p.grams);
  }
  const bool zones = input.centre && input.sigma && *input.sigma > 0.0;
  if (zones) {
    y_min = std::min(y_min, *input.centre - 3.3 * *input.sigma);
    y_max = std::max(y_max, *input.centre + 3.3 * *input.sigma);
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

  std::vector<LegendItem> legend = {
      {LegendItem::Swatch::kCircle, kData, "pack", ""},
  };
  if (zones) {
    legend.push_back({LegendItem::Swatch::kLine, kCentre, "centre line", ""});
    legend.push_back({LegendItem::Swatch::kDashedLine, kLimit, "control limits ±3σ", "7 4"});
  }
  for (const RefLine& ref : input.refs) {
    legend.push_back(
        {ref.dash.empty() ? LegendItem::Swatch::kLine : LegendItem::Swatch::kDashedLine, ref.colour,
         ref.label, ref.dash});
  }
  if (!input.settling.empty()) legend.push_back({LegendItem::Swatch::kHatch, "", "settling", ""});
  if (!input.events.empty()) {
    legend.push_back({LegendItem::Swatch::kTriangle, kAlarm, "alarm", ""});
    legend.push_back({LegendItem::Swatch::kDiamond, kWarning, "warning", ""});
  }
  frame.top += kLegendRowHeight * (LegendRows(frame, legend) - 1);
  DrawTitle(svg, frame, input.title);
  DrawLegend(svg, frame, legend);

  if (zones) DrawZones(svg, frame, *input.centre, *input.sigma);
  DrawYAxis(svg, frame, input.y_title);
  DrawXAxisTime(svg, frame, time_axis, input.x_title);

  // Settling periods: hatched (pattern, not only colour).
  if (!input.settling.empty()) {
    svg.BeginGroup("settling-periods");
    for (const TimeSpan& span : input.settling) {
      const double x1 = std::max(frame.X(static_cast<double>(span.from_ms)), frame.PlotLeft());
      const double x2 = std::min(frame.X(static_cast<double>(span.to_ms)), frame.PlotRight());
      if (x2 < x1) continue;
      svg.Rect(x1, frame.PlotTop(), std::max(x2 - x1, 2.0), frame.PlotHeight(),
               Paint{"", kHatchFill, 1.0, "", 0.55}, "settling");
    }
    svg.EndGroup();
  }

  // Centre line and control limits.
  if (zones) {
    svg.BeginGroup("limits");
    TextStyle label;
    label.size = kTickFont - 1.0;
    label.colour = kInk;
    const double c = *input.centre, s = *input.sigma;
    svg.Line(frame.PlotLeft(), frame.Y(c), frame.PlotRight(), frame.Y(c),
             Paint{kCentre, "", 1.5, "", 1.0}, "centre-line", "data-value=\"" + Coord(c) + "\"");
    svg.Text(frame.PlotRight() + 4.0, frame.Y(c) + 4.0, "CL " + FormatNumber(c, 2), label,
             "limit-label");
    for (int side : {1, -1}) {
      const double v = c + side * 3.0 * s;
      svg.Line(frame.PlotLeft(), frame.Y(v), frame.PlotRight(), frame.Y(v),
               Paint{kLimit, "", 1.5, "7 4", 1.0}, side > 0 ? "limit ucl" : "limit lcl",
               "data-value=\"" + Coord(v) + "\"");
      svg.Text(frame.PlotRight() + 4.0, frame.Y(v) + 4.0,
               (side > 0 ? "UCL " : "LCL ") + FormatNumber(v, 2), label, "limit-label");
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

  // The packs.
  const double plot_width = frame.PlotWidth();
  const std::size_t columns = static_cast<std::size_t>(std::max(1.0, std::floor(plot_width)));
  const bool band = input.points.size() >
                    columns * static_cast<std::size_t>(std::max(1, input.max_points_per_column));
  svg.BeginGroup("packs");
  if (input.points.empty()) {
    DrawNote(svg, frame, "No packs in this range");
  } else if (band) {
    std::vector<Column> cols(columns);
    for (const RunPoint& p : input.points) {
      if (!std::isfinite(p.grams)) continue;
      const double x = frame.X(static_cast<double>(p.time_ms)) - frame.PlotLeft();
      const std::size_t c =
          std::min(columns - 1, static_cast<std::size_t>(std::max(0.0, std::floor(x))));
      Column& col = cols[c];
      col.min = std::min(col.min, p.grams);
      col.max = std::max(col.max, p.grams);
      ++col.count;
    }
    std::string d;
    for (std::size_t c = 0; c < columns; ++c) {
      if (cols[c].count == 0) continue;
      const double x = frame.PlotLeft() + static_cast<double>(c) + 0.5;
      double y1 = frame.Y(cols[c].max), y2 = frame.Y(cols[c].min);
      if (y2 - y1 < 1.0) y2 = y1 + 1.0;  // a column of equal weights stays visible
      d += "M" + Coord(x) + ' ' + Coord(y1) + "V" + Coord(y2);
      ++st.columns_banded;
    }
    svg.Path(d, Paint{kData, "", 1.0, "", 1.0}, "band",
             "data-packs=\"" + std::to_string(input.points.size()) + "\"");
    // Rejected and error packs stay individually visible when they are few.
    std::size_t special = 0;
    for (const RunPoint& p : input.points) special += p.state != 0 ? 1 : 0;
    if (special <= 300) {
      for (const RunPoint& p : input.points) {
        if (p.state == 0 || !std::isfinite(p.grams)) continue;
        const double x = frame.X(static_cast<double>(p.time_ms)), y = frame.Y(p.grams);
        if (p.state == 1) {
          DrawTriangle(svg, x, y, 5.0, Paint{kLimit, kLimit, 1.0, "", 1.0}, "point rejected");
        } else {
          DrawCross(svg, x, y, 4.0, kSevere, "point error");
        }
        ++st.points_drawn;
      }
    }
  } else {
    std::vector<std::pair<double, double>> line;
    line.reserve(input.points.size());
    for (const RunPoint& p : input.points) {
      if (!std::isfinite(p.grams)) continue;
      line.emplace_back(frame.X(static_cast<double>(p.time_ms)), frame.Y(p.grams));
    }
    if (line.size() > 1) svg.Polyline(line, Paint{kDataLight, "", 1.0, "", 1.0}, "run-line");
    const double r = input.points.size() > 300 ? 2.0 : 3.2;
    for (const RunPoint& p : input.points) {
      if (!std::isfinite(p.grams)) continue;
      const double x = frame.X(static_cast<double>(p.time_ms)), y = frame.Y(p.grams);
      if (p.state == 1) {
        DrawTriangle(svg, x, y, r + 2.0, Paint{kLimit, kLimit, 1.0, "", 1.0}, "point rejected");
      } else if (p.state == 2) {
        DrawCross(svg, x, y, r + 1.0, kSevere, "point error");
      } else {
        svg.Circle(x, y, r, Paint{"", kData, 1.0, "", 1.0}, "point ok");
      }
      ++st.points_drawn;
    }
  }
  svg.EndGroup();

  // Events: a thin line at the time, a marker shaped by severity, labels for
  // the raised ones (staggered in three rows so neighbours do not overlap).
  if (!input.events.empty()) {
    svg.BeginGroup("events");
    TextStyle label;
    label.size = kTickFont - 2.0;
    int labelled = 0;
    int suppressed = 0;
    for (const EventMark& e : input.events) {
      const double t = static_cast<double>(e.time_ms);
      if (t < frame.x_lo || t > frame.x_hi) continue;
      const double x = frame.X(t);
      const std::string colour = SeverityColour(e.severity);
      svg.Line(x, frame.PlotTop(), x, frame.PlotBottom(), Paint{colour, "", 1.0, "3 3", 1.0},
               "event-line");
      const Paint paint{colour, e.cleared ? "#ffffff" : colour, 1.5, "", 1.0};
      const std::string css = e.cleared ? "event-marker cleared" : "event-marker raised";
      const double y = frame.PlotTop() + 8.0;
      if (e.severity >= 2) {
        DrawTriangle(svg, x, y, 7.0, paint, css);
      } else if (e.severity == 1) {
        DrawDiamond(svg, x, y, 6.5, paint, css);
      } else {
        svg.Circle(x, y, 5.0, paint, css);
      }
      if (e.cleared) continue;
      if (labelled >= input.max_event_labels) {
        ++suppressed;
        continue;
      }
      label.colour = colour;
      label.anchor = x > frame.PlotRight() - 120.0 ? Anchor::kEnd : Anchor::kStart;
      const double dx = label.anchor == Anchor::kEnd ? -6.0 : 6.0;
      svg.Text(x + dx, frame.PlotTop() + 24.0 + (labelled % 3) * 13.0, e.label, label,
               "event-label");
      ++labelled;
    }
    if (suppressed > 0) {
      TextStyle note;
      note.size = kTickFont - 2.0;
      note.colour = kInkSoft;
      note.anchor = Anchor::kEnd;
      svg.Text(frame.PlotRight(), frame.height - 30.0,
               std::to_string(suppressed) + " more event labels left out (see the event list)",
               note, "note");
    }
    svg.EndGroup();
  }
  DrawPlotBorder(svg, frame);
  return svg.Finish();
}

}  // namespace heft::chart
