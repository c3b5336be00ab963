// line_checkpoint.h — what the Plant keeps of one line across a restart:
// the monitor's state, the open lot, and the line's place and clocks in the
// Plant. Plant::SaveCheckpoints() / RestoreCheckpoints() (plant_checkpoint.cpp)
// produce and take them; heftd stores one per line (io/checkpoint_codec.h,
// table line_checkpoints). Plain value.
#pragma once

#include <climits>
#include <cstdint>
#include <optional>
#include <string>

#include "core/monitor/line_compliance_checkpoint.h"
#include "core/monitor/line_monitor_checkpoint.h"

namespace heft {

struct LineCheckpoint {
  std::string line;
  std::int64_t position = 0;         // order of first appearance in the Plant
  std::int64_t last_arrival_ms = 0;  // arrival clock of its last record (wall-clock silence)
  std::int64_t record_clock_ms = INT64_MIN;  // the Plant's latest record time (same for all)
  LineMonitorCheckpoint monitor;
  std::optional<LineComplianceCheckpoint> compliance;  // only for lines that keep lots
};

}  // namespace heft
