// alarm_types.h — the values of heft's alarm lifecycle (ISA-18.2 / IEC 62682
// terms): states, priorities, causes and one state transition.
//
// Produced by AlarmBook, stored by io/alarm_store, rendered by alarm_message
// and sent by the delivery channels. Plain values; thread-compatible.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

#include "core/model/finding.h"

namespace heft {

// States are stored by name (operations.md §1.2: the letters differ between
// sources). normal = A, active_unack = B, active_ack = C, cleared_unack = D
// (return to normal, unacknowledged).
enum class AlarmState : std::uint8_t {
  kNormal,
  kActiveUnack,
  kActiveAck,
  kClearedUnack,
  kShelved,     // removed from view by an operator, with an expiry
  kSuppressed,  // hidden by design while the line settles or is silent
};

enum class AlarmPriority : std::uint8_t { kLow, kMedium, kHigh };

// Who made the transition happen.
enum class AlarmCause : std::uint8_t { kProcess, kOperator, kSystem };

std::string_view AlarmStateName(AlarmState state);
std::string_view AlarmPriorityName(AlarmPriority priority);
std::string_view AlarmCauseName(AlarmCause cause);
std::optional<AlarmState> AlarmStateFromName(std::string_view name);
std::optional<AlarmPriority> AlarmPriorityFromName(std::string_view name);

// True in the states an operator sees as "in alarm" (B and C).
inline bool IsActive(AlarmState s) {
  return s == AlarmState::kActiveUnack || s == AlarmState::kActiveAck;
}

// Kind name of the pseudo-alarm that summarises an alarm flood in an area.
inline constexpr std::string_view kFloodKind = "flood";

// "oats-1:shift", "oats-1:shift:h3"; flood summaries "AREA:flood". Line ids
// never contain ':' (IsNativeLineId), so the id splits unambiguously.
std::string MakeAlarmId(std::string_view line, std::string_view kind, std::optional<int> head);

// A line's alarms at the moment of a transition (for a retained state topic).
struct LineAlarmSummary {
  int active = 0;          // in active_unack or active_ack
  int unacknowledged = 0;  // in active_unack or cleared_unack
  int shelved = 0;
  int suppressed = 0;
  std::optional<AlarmPriority> highest;  // of the active ones
};

// One state change of one alarm. `why` is a stable code:
//   raised, cleared, acknowledged, shelved, unshelved, shelve_expired,
//   suppressed, unsuppressed, chattering, chatter_ended, escalated, realarm,
//   flood_started, flood_ended.
struct AlarmTransition {
  std::int64_t seq = 0;  // increasing within one AlarmBook
  std::string event_id;  // unique and stable: receivers drop duplicates by it
  std::string alarm_id;
  std::string line;  // empty for a flood summary
  std::string area;  // operator area (group of lines)
  std::string kind;  // a FindingKind name, or kFloodKind
  std::optional<int> head;
  AlarmState from = AlarmState::kNormal;
  AlarmState to = AlarmState::kNormal;
  AlarmPriority priority = AlarmPriority::kLow;
  std::int64_t time_ms = 0;
  AlarmCause cause = AlarmCause::kProcess;
  std::string who;  // operator name for operator actions, else "heftd"
  std::string why;
  std::string note;
  bool annunciate = true;  // false: stored, not sent (held by a flood, suppressed)
  bool chattering = false;
  std::optional<std::int64_t> shelved_until_ms;
  std::optional<Finding> finding;  // the finding behind a process transition
  int flood_count = 0;             // flood summaries: starts in the window / held in the flood
  LineAlarmSummary line_summary;
  std::string message;  // the operator message (filled by the caller's renderer)
};

}  // namespace heft
