// alarm_settings.h — how the AlarmBook treats findings: priorities, delays,
// deadband, chattering, flood and shelving limits, operator areas.
//
// Defaults follow operations.md §1 (ISA-18.2 / EEMUA 191 figures, marked
// there); the config loader (io/alerting_loader) fills them from the
// `alerting:` block. Plain values.
#pragma once

#include <array>
#include <cstdint>
#include <map>
#include <string>

#include "core/alarm/alarm_types.h"
#include "core/model/finding.h"

namespace heft {

struct AlarmSettings {
  // Priority per finding kind (index = FindingKind). A raise with Severity
  // kAlarm, or with |size_sigma| >= escalate_sigma, is one level higher.
  std::array<AlarmPriority, kFindingKindCount> priority = {
      AlarmPriority::kMedium,  // shift
      AlarmPriority::kMedium,  // drift
      AlarmPriority::kLow,     // oscillation
      AlarmPriority::kLow,     // settling (only "settling too long" is an alarm)
      AlarmPriority::kLow,     // spread
      AlarmPriority::kHigh,    // stuck
      AlarmPriority::kLow,     // silence
      AlarmPriority::kLow,     // outlier
      AlarmPriority::kHigh,    // compliance
  };
  double escalate_sigma = 3.0;

  // Nuisance reduction (operations.md §1.5). Times are in milliseconds.
  std::int64_t on_delay_ms = 0;   // a raise must persist this long
  std::int64_t off_delay_ms = 0;  // a clear must persist this long
  std::int64_t realarm_deadband_ms =
      30'000;                   // re-raise this soon after a clear must persist this long
  std::int64_t realarm_ms = 0;  // acknowledged but still active this long: unack again (0 = off)

  // Chattering: this many activations within the window (operations.md §1.7:
  // 3 or more in 1 min) → reported once and held active until quiet for a window.
  int chatter_count = 3;
  std::int64_t chatter_window_ms = 60'000;

  // Flood per operator area (operations.md §0: more than 10 in 10 min; ends
  // when fewer than 5 in 10 min).
  int flood_start_above = 10;
  int flood_end_below = 5;
  std::int64_t flood_window_ms = 600'000;

  // Shelving (operations.md §1.3: a configured maximum; longer is refused).
  std::int64_t shelve_default_ms = 3'600'000;
  std::int64_t shelve_max_ms = 8 * 3'600'000;

  // Operator areas: line id → area. Lines not listed are their own area.
  std::map<std::string, std::string, std::less<>> area_of_line;
};

}  // namespace heft
