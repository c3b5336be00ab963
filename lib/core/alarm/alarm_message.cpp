#include "core/alarm/alarm_message.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>

#include "core/monitor/operator_message.h"
#include "core/record/native_record.h"

namespace heft {
namespace {

constexpr std::array<std::string_view, 12> kLifecycleKeys = {
    "acknowledged", "shelved",       "unshelved", "shelve_expired", "suppressed",    "unsuppressed",
    "chattering",   "chatter_ended", "escalated", "realarm",        "flood_started", "flood_ended"};

// Built-in lifecycle texts; a catalog may override each.
const TemplateValues& BuiltIn() {
  static const TemplateValues kTexts = {
      {"acknowledged", "{alarm} acknowledged by {who}[: {note}]."},
      {"shelved", "{alarm} shelved by {who} until {until}[: {note}]. It is still evaluated."},
      {"unshelved", "{alarm} unshelved by {who}; it is now {state_text}[: {note}]."},
      {"shelve_expired", "{alarm} shelving ended; it is now {state_text}."},
      {"suppressed", "{where}: {kind} alarm held while the {note}."},
      {"unsuppressed", "{where}: {kind} alarm is {state_text} now that the line runs steadily."},
      {"chattering",
       "{where}: {kind} alarm is chattering (raised[ {chatter_count} times within "
       "{chatter_window}]); "
       "held active until it stays clear. Find the cause once rather than answering each "
       "message."},
      {"chatter_ended", "{where}: {kind} alarm has stopped chattering."},
      {"escalated", "{where}: {kind} alarm is now {priority} priority[ ({size_g}, {size_sigma})]."},
      {"realarm", "{where}: {kind} alarm still active after acknowledgement; please check again."},
      {"flood_started",
       "Alarm flood in area {area}: {count} alarms started[ within {flood_window}]. Single "
       "messages "
       "are held until it eases; deal with high priority alarms first."},
      {"flood_ended",
       "Alarm flood in area {area} has eased; {count} alarm messages were held (see the alarm "
       "history)."},
  };
  return kTexts;
}

std::string Format(const char* format, double value) {
  char buf[64];
  std::snprintf(buf, sizeof buf, format, value);
  return buf;
}

std::string Clock(std::int64_t time_ms) {
  char iso[32];
  FormatTimeMs(time_ms, iso);
  return std::string(iso + 11, iso + 19) + "Z";
}

std::string Duration(std::int64_t ms) {
  if (ms % 3'600'000 == 0 && ms >= 3'600'000) return std::to_string(ms / 3'600'000) + " h";
  if (ms % 60'000 == 0 && ms >= 60'000) return std::to_string(ms / 60'000) + " min";
  return std::to_string(ms / 1000) + " s";
}

std::string StateText(AlarmState s) {
  switch (s) {
    case AlarmState::kNormal:
      return "back to normal";
    case AlarmState::kActiveUnack:
      return "active, awaiting acknowledgement";
    case AlarmState::kActiveAck:
      return "active (acknowledged)";
    case AlarmState::kClearedUnack:
      return "cleared, awaiting acknowledgement";
    case AlarmState::kShelved:
      return "shelved";
    case AlarmState::kSuppressed:
      return "held while the line settles";
  }
  return "";
}

}  // namespace

const std::vector<std::string_view>& MessagePlaceholders() {
  static const std::vector<std::string_view> kNames = {
      "alarm",  "line",          "head",           "area",          "product",    "kind",
      "where",  "priority",      "state",          "state_text",    "prev_state", "who",
      "note",   "why",           "time",           "since",         "since_pack", "since_time",
      "size_g", "size_sigma",    "level_g",        "nominal_g",     "target_g",   "direction",
      "effect", "period_packs",  "period_s",       "slope_g_per_h", "detector",   "count",
      "until",  "chatter_count", "chatter_window", "flood_window"};
  return kNames;
}

bool IsMessageKey(std::string_view key) {
  if (std::find(kLifecycleKeys.begin(), kLifecycleKeys.end(), key) != kLifecycleKeys.end()) {
    return true;
  }
  const std::size_t dot = key.find('.');
  if (dot == std::string_view::npos) return false;
  const std::string_view suffix = key.substr(dot + 1);
  return KindFromName(key.substr(0, dot)).has_value() &&
         (suffix == "raised" || suffix == "raised_head" || suffix == "cleared");
}

TemplateValues MessageValues(const AlarmTransition& t, const LineSettings* line,
                             const AlarmSettings* alarm) {
  TemplateValues v;
  if (alarm != nullptr) {
    v["chatter_count"] = std::to_string(alarm->chatter_count);
    v["chatter_window"] = Duration(alarm->chatter_window_ms);
    v["flood_window"] = Duration(alarm->flood_window_ms);
  }
  v["alarm"] = t.alarm_id;
  v["line"] = t.line;
  v["head"] = t.head ? std::to_string(*t.head) : "";
  v["area"] = t.area;
  v["product"] = line != nullptr ? line->product : "";
  v["kind"] = t.kind;
  v["where"] = t.line.empty() ? "area " + t.area
                              : t.line + (t.head ? " head " + std::to_string(*t.head) : "");
  v["priority"] = std::string(AlarmPriorityName(t.priority));
  v["state"] = std::string(AlarmStateName(t.to));
  v["state_text"] = StateText(t.to);
  v["prev_state"] = std::string(AlarmStateName(t.from));
  v["who"] = t.who;
  v["note"] = t.note;
  v["why"] = t.why;
  v["time"] = Clock(t.time_ms);
  v["count"] = t.flood_count > 0 ? std::to_string(t.flood_count) : "";
  v["until"] = t.shelved_until_ms ? Clock(*t.shelved_until_ms) : "";
  if (t.finding) {
    const Finding& f = *t.finding;
    if (f.onset) {
      v["since_pack"] = "#" + std::to_string(*f.onset);
      v["since"] = "pack #" + std::to_string(*f.onset);
    }
    if (f.onset_time_ms) {
      v["since_time"] = Clock(*f.onset_time_ms);
      v["since"] +=
          (v["since"].empty() ? "" : " ") + std::string("(") + Clock(*f.onset_time_ms) + ")";
    }
    if (f.size_g) {
      v["size_g"] = Format("%+.1f g", *f.size_g);
      v["direction"] = *f.size_g < 0 ? "dropped" : "rose";
    }
    if (f.size_sigma) v["size_sigma"] = Format("%+.1f sigma", *f.size_sigma);
    if (f.level_g) v["level_g"] = Format("%.1f g", *f.level_g);
    if (f.period_packs) v["period_packs"] = Format("%.0f", *f.period_packs);
    if (f.period_s) v["period_s"] = Format("%.0f s", *f.period_s);
    if (f.slope_g_per_h) v["slope_g_per_h"] = Format("%+.1f g/h", *f.slope_g_per_h);
    v["detector"] = f.detector;
    if (line != nullptr && line->nominal_g && f.level_g) {
      const double over = *f.level_g - *line->nominal_g;
      v["effect"] = over < 0.0
                        ? "Level is " + Format("%.1f g", -over) + " BELOW the nominal " +
                              Format("%.1f g", *line->nominal_g) + ": the average rule is at risk."
                        : "Giveaway now about " + Format("%.1f g", over) + " per pack.";
    }
  }
  if (line != nullptr && line->nominal_g) v["nominal_g"] = Format("%.1f g", *line->nominal_g);
  if (line != nullptr && line->target_g) v["target_g"] = Format("%.1f g", *line->target_g);
  return v;
}

std::string AlarmMessage(const AlarmTransition& t, const LineSettings* line,
                         const MessageCatalog& catalog, const AlarmSettings* alarm) {
  TemplateValues values = MessageValues(t, line, alarm);
  const bool process_text = t.why == "raised" || t.why == "cleared";
  if (process_text) {
    const std::string base = t.kind + (t.why == "raised" ? ".raised" : ".cleared");
    if (t.head && t.why == "raised") {
      auto it = catalog.templates.find(base + "_head");
      if (it != catalog.templates.end()) return RenderTemplate(it->second, values);
    }
    auto it = catalog.templates.find(base);
    if (it != catalog.templates.end()) return RenderTemplate(it->second, values);
    if (t.finding) {
      static const LineSettings kNoLine;
      return OperatorMessage(*t.finding, line != nullptr ? *line : kNoLine);
    }
    return values["where"] + ": " + t.kind + " " + t.why + ".";
  }
  if (auto it = catalog.templates.find(t.why); it != catalog.templates.end()) {
    return RenderTemplate(it->second, values);
  }
  if (auto it = BuiltIn().find(t.why); it != BuiltIn().end()) {
    return RenderTemplate(it->second, values);
  }
  return t.alarm_id + ": " + t.why + ".";
}

}  // namespace heft
