// sample_groups.cpp — head, shift and lot groups for the box plots.
#include "core/report/sample_groups.h"

#include <algorithm>
#include <cstdio>
#include <map>

#include "core/chart/nice_ticks.h"
#include "core/stats/box_plot.h"

namespace heft {
namespace {

chart::BoxGroup MakeGroup(std::string label, std::vector<double> values) {
  std::sort(values.begin(), values.end());
  chart::BoxGroup group;
  group.label = std::move(label);
  group.box = ComputeBoxPlot(values);
  return group;
}

std::int64_t FloorDiv(std::int64_t a, std::int64_t b) {
  std::int64_t q = a / b;
  if ((a % b != 0) && ((a < 0) != (b < 0))) --q;
  return q;
}

std::string Clock(int minutes) {
  char buffer[8];
  std::snprintf(buffer, sizeof buffer, "%02d:%02d", (minutes / 60) % 24, minutes % 60);
  return buffer;
}

}  // namespace

Status ParseShiftPattern(std::string_view text, ShiftPattern* out) {
  ShiftPattern pattern;
  pattern.start_minutes.clear();
  std::size_t pos = 0;
  while (pos <= text.size()) {
    const std::size_t comma = std::min(text.find(',', pos), text.size());
    const std::string_view part = text.substr(pos, comma - pos);
    int h = -1, m = -1;
    char extra = 0;
    const std::string copy(part);
    if (part.size() != 5 || std::sscanf(copy.c_str(), "%2d:%2d%c", &h, &m, &extra) != 2 || h < 0 ||
        h > 23 || m < 0 || m > 59) {
      return Status::Error("shift start '" + copy + "' is not a time of day HH:MM");
    }
    const int minutes = h * 60 + m;
    if (!pattern.start_minutes.empty() && minutes <= pattern.start_minutes.back()) {
      return Status::Error("shift starts must be ascending and distinct ('" + copy + "')");
    }
    pattern.start_minutes.push_back(minutes);
    pos = comma + 1;
  }
  if (pattern.start_minutes.empty()) return Status::Error("no shift starts given");
  *out = std::move(pattern);
  return Status::Ok();
}

std::vector<chart::BoxGroup> GroupByHead(std::span<const HistorySample> samples) {
  std::map<int, std::vector<double>> by_head;
  for (const HistorySample& s : samples) {
    if (s.status != 0) continue;
    by_head[s.head].push_back(s.grams);
  }
  std::vector<chart::BoxGroup> groups;
  for (auto& [head, values] : by_head) {
    groups.push_back(MakeGroup(head < 0 ? "no head" : std::to_string(head), std::move(values)));
  }
  return groups;
}

std::vector<chart::BoxGroup> GroupByShift(std::span<const HistorySample> samples,
                                          const ShiftPattern& pattern, int offset_minutes,
                                          std::size_t max_groups) {
  constexpr std::int64_t kMinuteMs = 60'000;
  constexpr std::int64_t kDayMinutes = 1440;
  const std::vector<int>& starts = pattern.start_minutes;
  // Key: the shift's start in local minutes since the epoch.
  std::map<std::int64_t, std::vector<double>> by_shift;
  std::map<std::int64_t, int> length;  // minutes
  for (const HistorySample& s : samples) {
    if (s.status != 0 || starts.empty()) continue;
    const std::int64_t local = FloorDiv(s.time_ms, kMinuteMs) + offset_minutes;
    const std::int64_t day = FloorDiv(local, kDayMinutes);
    const int minute = static_cast<int>(local - day * kDayMinutes);
    // The last start at or before `minute`; before the first start the shift
    // began on the previous day at the last start.
    std::int64_t start = 0;
    int next = 0;
    auto it = std::upper_bound(starts.begin(), starts.end(), minute);
    if (it == starts.begin()) {
      start = (day - 1) * kDayMinutes + starts.back();
      next = starts.front() + static_cast<int>(kDayMinutes);
      length[start] = next - starts.back();
    } else {
      const int begin = *(it - 1);
      start = day * kDayMinutes + begin;
      const int end = it == starts.end() ? starts.front() + static_cast<int>(kDayMinutes) : *it;
      length[start] = end - begin;
    }
    by_shift[start].push_back(s.grams);
  }
  while (by_shift.size() > max_groups) by_shift.erase(by_shift.begin());
  std::vector<chart::BoxGroup> groups;
  for (auto& [start, values] : by_shift) {
    const std::int64_t ms = (start - offset_minutes) * kMinuteMs;
    std::string date = chart::FormatDateTime(ms, offset_minutes, false);  // "YYYY-MM-DD HH:MM"
    const int begin = static_cast<int>(start % kDayMinutes);
    std::string label = date.substr(5, 5) + " " + Clock(begin) + "–" + Clock(begin + length[start]);
    groups.push_back(MakeGroup(std::move(label), std::move(values)));
  }
  return groups;
}

std::vector<chart::BoxGroup> GroupByLot(std::span<const HistorySample> samples,
                                        std::span<const LotRange> lots, std::size_t max_groups) {
  std::vector<chart::BoxGroup> groups;
  const std::size_t first = lots.size() > max_groups ? lots.size() - max_groups : 0;
  for (std::size_t i = first; i < lots.size(); ++i) {
    std::vector<double> values;
    for (const HistorySample& s : samples) {
      if (s.status == 0 && s.time_ms >= lots[i].from_ms && s.time_ms <= lots[i].to_ms) {
        values.push_back(s.grams);
      }
    }
    if (!values.empty()) groups.push_back(MakeGroup(lots[i].label, std::move(values)));
  }
  return groups;
}

}  // namespace heft
