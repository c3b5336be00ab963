// alarm_message.h — the operator message of an alarm transition, from a
// MessageCatalog of templates (config/messages.yaml) or the built-in texts.
//
// Template keys: "<kind>.raised", "<kind>.raised_head" (used when the alarm is
// on one filler head), "<kind>.cleared", and one key per lifecycle reason:
// acknowledged, shelved, unshelved, shelve_expired, suppressed, unsuppressed,
// chattering, chatter_ended, escalated, realarm, flood_started, flood_ended.
// A process transition with no template for its kind falls back to
// OperatorMessage (core/monitor), the built-in default that `heft replay`
// also uses. Pure; thread-compatible.
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "core/alarm/alarm_settings.h"
#include "core/alarm/alarm_types.h"
#include "core/alarm/message_template.h"
#include "core/monitor/line_settings.h"

namespace heft {

struct MessageCatalog {
  TemplateValues templates;  // key → template text
};

// The placeholder names a template may use (documented in config/messages.yaml).
const std::vector<std::string_view>& MessagePlaceholders();
// The keys a catalog may hold.
bool IsMessageKey(std::string_view key);

// The values for one transition (every placeholder; empty when unknown).
// `alarm` (may be null) fills chatter_count, chatter_window and flood_window.
TemplateValues MessageValues(const AlarmTransition& t, const LineSettings* line,
                             const AlarmSettings* alarm = nullptr);

// The message for one transition. `line` may be null (unknown line, floods).
std::string AlarmMessage(const AlarmTransition& t, const LineSettings* line,
                         const MessageCatalog& catalog, const AlarmSettings* alarm = nullptr);

}  // namespace heft
