// restored_alarm.h — one alarm carried over from an earlier heftd run, as the
// io layer reads it from the alarm tables (io/alarm_store) for
// AlarmBook::Restore. Plain value.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "core/alarm/alarm_types.h"

namespace heft {

struct RestoredAlarm {
  std::string alarm_id, line, area, kind;
  std::optional<int> head;
  AlarmState state = AlarmState::kNormal;  // active_unack, active_ack, cleared_unack or shelved
  AlarmPriority priority = AlarmPriority::kLow;
  std::int64_t since_ms = 0;  // time of its latest transition
  std::optional<std::int64_t> shelved_until_ms;
  // Shelved alarms: whether the condition was true when it was shelved (the
  // state it was shelved from was active); the other states imply it.
  bool shelved_while_active = false;
};

}  // namespace heft
