// alarm_json.h — the machine-readable JSON form of an alarm transition
// (schema 1, documented in README "Alarm transition JSON").
//
// One flat object, keys in a fixed order, UTC ISO-8601 times, grams. Receivers
// drop duplicates by "event_id" (delivery is at-least-once). Fields are only
// ever added under schema 1; a change of meaning raises "schema". Used by the
// alarm store, every delivery channel and `heft alarms --format json`. Pure.
#pragma once

#include <string>

#include "core/alarm/alarm_types.h"

namespace heft {

inline constexpr int kAlarmJsonSchema = 1;

std::string AlarmTransitionToJson(const AlarmTransition& t);

// The retained per-line state (MQTT `<prefix>/<line>/state`), from a transition.
std::string LineStateToJson(const AlarmTransition& t);

}  // namespace heft
