// period_summary.h — the figures of one line over a time range: counts by pack
// state, the statistics engine's window summary (mean, sd, quartiles),
// capability against nominal − TNE, giveaway and T1/T2 counts (through the
// compliance core's LotAccumulator, so the definitions match the lot figures),
// and the events raised in the range by kind.
//
// Statistics use the packs the checkweigher passed (status ok); rejected packs
// are counted, error packs are not trusted. The compliance figures are the
// packer's own control, not legal verification. Used by `heft summary`, the
// report and the HTTP API. Pure; thread-safe.
#pragma once

#include <array>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "core/comply/lot_accumulator.h"
#include "core/comply/net_content_limits.h"
#include "core/model/finding.h"
#include "core/report/history_sample.h"
#include "core/stats/stats_types.h"

namespace heft {

struct PeriodSummary {
  std::size_t packs = 0;  // every stored pack in the range
  std::size_t ok = 0;
  std::size_t rejected = 0;
  std::size_t errors = 0;
  std::int64_t first_ms = 0, last_ms = 0;  // of any pack (0 when none)
  WindowSummary stats;                     // of the ok packs, in time order
  // Net-content figures when the line's nominal is known and the rule table has it.
  std::optional<comply::NetContentLimits> limits;
  std::optional<CapabilityData> capability;             // lower limit T1 = nominal − TNE
  std::optional<comply::LotFigures> figures;            // giveaway, T1/T2 counts, ...
  std::optional<double> giveaway_percent;               // (mean − nominal) / nominal × 100
  std::array<int, kFindingKindCount> raised_by_kind{};  // events raised in the range
  int raised = 0;
  int cleared = 0;
};

// `samples` in time order; `events` those of the range. `limits` empty when the
// nominal is unknown (no capability, giveaway or T1/T2 figures then).
PeriodSummary SummarizePeriod(std::span<const HistorySample> samples,
                              std::span<const HistoryEvent> events,
                              const std::optional<comply::NetContentLimits>& limits);

}  // namespace heft
