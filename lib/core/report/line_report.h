// line_report.h — one line's engineer report for a time range as one
// self-contained HTML file (inline SVG and CSS, no script, no network), or one
// of its charts as a standalone SVG.
//
// Contents: key figures (count, mean, sd, quartiles, capability against
// nominal − TNE, giveaway, T1/T2), run chart (centre line = mean, control
// limits = mean ± 3 short-term sigma (MR̄/d2, individuals chart), zones,
// settling hatched, event markers), histogram (Freedman–Diaconis bins from 200
// packs, square-root rule below) with nominal / T1 / T2 lines, box plots by
// head, shift and lot, compliance per lot, giveaway and the event list. Print
// CSS keeps charts whole on a page. Compliance figures are the packer's own
// control, not legal verification; the report says so.
//
// Used by `heft report`. Pure (the generation time comes in); thread-safe.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/comply/net_content_limits.h"
#include "core/monitor/lot_report.h"
#include "core/report/history_sample.h"
#include "core/report/sample_groups.h"

namespace heft {

enum class ReportChart { kRun, kHistogram, kBoxPlotHead, kBoxPlotLot, kBoxPlotShift };

// "run", "histogram", "boxplot-head", "boxplot-lot", "boxplot-shift".
std::optional<ReportChart> ReportChartFromName(std::string_view name);
const char* ReportChartName(ReportChart chart);

struct ReportInput {
  HistoryLine line;
  std::vector<HistorySample> samples;  // time order
  std::vector<HistoryEvent> events;    // time order, the range only
  std::vector<LotReport> lots;         // lots of the line overlapping the range
  std::optional<comply::NetContentLimits> limits;
  std::string rules_name;   // rule table the limits came from, for the footnote
  std::string limits_note;  // why there are no limits, when there are none
  std::optional<std::int64_t> from_ms, to_ms;
  int offset_minutes = 0;         // display zone: UTC + offset
  std::string zone_name = "UTC";  // "UTC" or "local (UTC+01:00)"
  ShiftPattern shifts;
  std::string generated;  // generation time text, shown in the header
  std::string database;   // where the data came from
};

std::string RenderReportChart(const ReportInput& input, ReportChart chart);
std::string RenderReportHtml(const ReportInput& input);

}  // namespace heft
