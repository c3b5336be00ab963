// period_summary.cpp — figures of one line over a time range.
#include "core/report/period_summary.h"

#include <vector>

#include "core/comply/lot_accumulator.h"
#include "core/stats/capability.h"
#include "core/stats/window_summary.h"

namespace heft {

PeriodSummary SummarizePeriod(std::span<const HistorySample> samples,
                              std::span<const HistoryEvent> events,
                              const std::optional<comply::NetContentLimits>& limits) {
  PeriodSummary out;
  std::vector<double> ok_values;
  ok_values.reserve(samples.size());
  for (const HistorySample& s : samples) {
    if (out.packs == 0) out.first_ms = s.time_ms;
    out.last_ms = s.time_ms;
    ++out.packs;
    if (s.status == 1) {
      ++out.rejected;
    } else if (s.status == 2) {
      ++out.errors;
    } else {
      ++out.ok;
      ok_values.push_back(s.grams);
    }
  }
  out.stats = SummarizeSeries(ok_values);
  if (limits) {
    out.limits = *limits;
    comply::LotAccumulator lot(*limits, comply::LotSettings());
    for (const HistorySample& s : samples) {
      const comply::PackRole role = s.status == 1   ? comply::PackRole::kRejected
                                    : s.status == 2 ? comply::PackRole::kError
                                                    : comply::PackRole::kInLot;
      lot.Add(s.grams, role, s.time_ms, s.record_index);
    }
    out.figures = lot.Figures();
    if (out.stats.count > 0) {
      out.capability = ComputeCapability(out.stats, limits->t1_g, std::nullopt);
      out.giveaway_percent = (out.stats.mean - limits->nominal_g) / limits->nominal_g * 100.0;
    }
  }
  for (const HistoryEvent& e : events) {
    if (e.finding.transition == Transition::kRaised) {
      ++out.raised;
      ++out.raised_by_kind[static_cast<int>(e.finding.kind)];
    } else {
      ++out.cleared;
    }
  }
  return out;
}

}  // namespace heft
