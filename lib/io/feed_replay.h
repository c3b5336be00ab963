// feed_replay.h — runs a recorded feed file through the same core as heftd.
//
// Reads the file in large chunks into one StreamIngest and one Plant; every
// finding goes to the sink with its operator message. Records without a time
// take the latest record time seen so far (0 before any), so a replay never
// reads a clock and is byte-for-byte repeatable.
#pragma once

#include <cstdint>
#include <functional>
#include <string>
#include <string_view>

#include "core/model/finding.h"
#include "core/model/status.h"
#include "core/monitor/line_settings.h"
#include "core/monitor/lot_report.h"
#include "core/monitor/stream_ingest.h"

namespace heft {

struct ReplayResult {
  IngestCounters counters;
  std::int64_t findings = 0;
  std::int64_t lines = 0;
  std::int64_t lots = 0;  // closed lots handed to on_lot (partial ones at the end included)
};

struct ReplayCallbacks {
  std::function<void(const Finding&, std::string_view message)> on_finding;
  std::function<void(const RecordProblem&)> on_problem;  // optional
  std::function<void(std::string_view line, const Pack&)> on_pack;  // optional
  // Closed lots, in the order they closed; at the end of the feed every open
  // lot is closed as partial. Optional.
  std::function<void(const LotReport&)> on_lot;
};

struct SourceSettings;  // io/source_settings.h

// `path` "-" reads standard input. `source` (optional): read the feed with
// that configured source's record format and maximum record length instead
// of the native CSV (a recorded non-native feed).
Status ReplayFeed(const std::string& path, const PlantSettings& settings,
                  const ReplayCallbacks& callbacks, ReplayResult* result,
                  const SourceSettings* source = nullptr);

}  // namespace heft
