// sample_groups.h — splits one line's packs into the groups the box plots
// compare: by filler head, by work shift (each shift of each day on its own)
// and by lot (time ranges of the stored lots). Each group gets the statistics
// engine's BoxPlotData of its ok packs (Tukey fences, type 7 quartiles).
//
// Work shifts: start times of day in the display zone; the default
// 06:00/14:00/22:00 (three eight-hour shifts) is common practice, not a rule.
// Used by the report builder. Pure; thread-safe.
#pragma once

#include <cstdint>
#include <span>
#include <string>
#include <vector>

#include "core/chart/box_plot_chart.h"
#include "core/model/status.h"
#include "core/report/history_sample.h"

namespace heft {

struct ShiftPattern {
  std::vector<int> start_minutes = {6 * 60, 14 * 60, 22 * 60};  // ascending, 0..1439
};

// Parses "06:00,14:00,22:00" (at least one start, ascending, distinct).
Status ParseShiftPattern(std::string_view text, ShiftPattern* out);

struct LotRange {
  std::string label;
  std::int64_t from_ms = 0;  // inclusive
  std::int64_t to_ms = 0;    // inclusive
};

std::vector<chart::BoxGroup> GroupByHead(std::span<const HistorySample> samples);
// At most `max_groups` shifts (the latest ones) are kept.
std::vector<chart::BoxGroup> GroupByShift(std::span<const HistorySample> samples,
                                          const ShiftPattern& pattern, int offset_minutes,
                                          std::size_t max_groups = 21);
std::vector<chart::BoxGroup> GroupByLot(std::span<const HistorySample> samples,
                                        std::span<const LotRange> lots,
                                        std::size_t max_groups = 30);

}  // namespace heft
