// run_chart.h — the run chart of one line's packs in time order: the weights,
// centre line, control limits (centre ± 3 sigma) with the ±1/2/3 sigma zones
// shaded, optional reference lines (nominal, T1), settling periods hatched,
// and event markers with labels.
//
// Long runs are down-sampled per pixel column: where a column holds more than
// a few packs the chart draws that column's minimum-to-maximum band (so every
// extreme stays visible) instead of each pack, which keeps a day of packs a
// small file. Short runs draw one marker per pack, shaped by the pack's state
// (circle ok, triangle rejected, cross weighing error).
//
// Used by the HTML report and `heft report --svg run`. Pure; thread-safe.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace heft::chart {

struct RunPoint {
  std::int64_t time_ms = 0;
  double grams = 0.0;
  int state = 0;  // 0 ok, 1 rejected, 2 weighing error (PackStatus values)
};

struct TimeSpan {
  std::int64_t from_ms = 0;
  std::int64_t to_ms = 0;
};

struct EventMark {
  std::int64_t time_ms = 0;
  std::string label;     // short: "shift", "drift head 3", ...
  int severity = 1;      // 0 info, 1 warning, 2 alarm (Severity values)
  bool cleared = false;  // hollow marker, no label
};

struct RefLine {
  double value = 0.0;
  std::string label;      // "nominal 500 g"
  std::string css_class;  // "ref-nominal", "ref-t1", ...
  std::string colour;
  std::string dash;  // empty = solid
};

struct RunChartInput {
  std::string title;
  std::string y_title = "net weight (g)";
  std::string x_title = "time (UTC)";
  int offset_minutes = 0;        // display zone for the time axis
  std::vector<RunPoint> points;  // time order
  std::optional<double> centre;  // centre line
  std::optional<double> sigma;   // zones and limits need centre and sigma > 0
  std::vector<RefLine> refs;
  std::vector<TimeSpan> settling;
  std::vector<EventMark> events;
  std::optional<std::int64_t> from_ms, to_ms;  // the x range asked for (else the data's)
  double width = 960.0;
  double height = 420.0;
  // Columns holding more packs than this are drawn as a min/max band.
  int max_points_per_column = 2;
  int max_event_labels = 24;  // more events: markers only, and a note saying so
};

struct RunChartStats {
  std::size_t points_drawn = 0;    // individual markers
  std::size_t columns_banded = 0;  // min/max columns
};

std::string RenderRunChart(const RunChartInput& input, RunChartStats* stats = nullptr);

}  // namespace heft::chart
