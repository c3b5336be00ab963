// nice_ticks.h — axis ranges and tick positions people read easily: numeric
// steps from the 1-2-5 series (1, 2, 5, 10, 20, ...) and clock-time steps
// (seconds, minutes, hours, days) with labels in UTC or a fixed local offset.
//
// Used by the chart writers (plot_frame, run chart, histogram, box plot). Pure
// functions; thread-safe.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

namespace heft::chart {

struct NiceAxis {
  double lo = 0.0;            // axis start: a multiple of step at or below the data
  double hi = 1.0;            // axis end: a multiple of step at or above the data
  double step = 1.0;          // 1, 2 or 5 × 10^k
  std::vector<double> ticks;  // lo, lo + step, ..., hi
  int decimals = 0;           // decimals the tick labels need
};

// Smallest 1, 2 or 5 × 10^k that is >= x (x > 0).
double NiceStepAtLeast(double x);

// An axis covering [data_min, data_max] with about `target_ticks` ticks (at
// least 2). A zero-width range is widened around its value; non-finite input
// gives the axis 0..1.
NiceAxis MakeNiceAxis(double data_min, double data_max, int target_ticks = 6);

// Fixed-point text with `decimals` decimals; "-0" is written "0".
std::string FormatNumber(double value, int decimals);

struct TimeAxis {
  std::int64_t lo_ms = 0;
  std::int64_t hi_ms = 1;
  std::int64_t step_ms = 1;
  std::vector<std::int64_t> ticks;  // multiples of the step in the display zone
  std::vector<std::string> labels;  // "06:00", "03-02 06:00" where the date changes
};

// Ticks on whole seconds/minutes/hours/days of the display zone (UTC plus
// `offset_minutes`) for the span [lo_ms, hi_ms]; about `target_ticks` of them.
TimeAxis MakeTimeAxis(std::int64_t lo_ms, std::int64_t hi_ms, int target_ticks, int offset_minutes);

// "2026-03-02 06:00:05" in the display zone (UTC plus offset_minutes).
std::string FormatDateTime(std::int64_t time_ms, int offset_minutes, bool with_seconds = true);

}  // namespace heft::chart
