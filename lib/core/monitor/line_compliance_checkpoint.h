// line_compliance_checkpoint.h — one line's open lot and compliance finding
// state as a plain value, so heftd can stop and continue the lot (same lot
// row, same figures, lot numbers going on) instead of closing it as partial.
//
// LineCompliance::SaveCheckpoint() fills it; RestoreCheckpoint() into a fresh
// LineCompliance built with the same lot settings continues exactly (the lot
// clock still ends the lot by its own rule: a restart after the lot's hour
// or shift has passed closes it at the first new pack, as a running daemon
// would). `open_lot` is the open lot as it stood, marked partial: when the lot
// settings changed meanwhile the lot cannot be continued, and the Plant closes
// it with that report (the figures and verdicts under the settings it was
// kept with). Serialised by io/checkpoint_codec.h. Plain value.
#pragma once

#include <cstdint>
#include <optional>
#include <vector>

#include "core/comply/lot_accumulator.h"
#include "core/comply/lot_clock.h"
#include "core/model/finding.h"
#include "core/monitor/lot_report.h"

namespace heft {

struct LineComplianceCheckpoint {
  std::uint64_t settings_fingerprint = 0;  // LineCompliance::SettingsFingerprint()
  comply::LotClock::State clock;
  comply::LotAccumulator::Checkpoint lot;
  std::int64_t seq = 0;  // lots opened so far
  std::int64_t lot_opened_ms = 0;
  bool lot_open = false;
  std::int64_t lot_seen = 0;
  std::vector<double> level_ring;  // raw ring of LineCompliance::kLevelWindowPacks values
  int level_next = 0, level_count = 0;
  double level_sum = 0.0;
  std::optional<Severity> raised;  // open compliance finding
  std::uint32_t announced = 0;
  std::optional<std::int64_t> low_since;
  int since_assess = 0;
  std::optional<LotReport> open_lot;  // as it stood, partial; none when no lot was open
};

}  // namespace heft
