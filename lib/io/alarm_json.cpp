// alarm_json.cpp — AlarmTransitionToJson via nlohmann::ordered_json (insertion
// order = documented key order).
#include "io/alarm_json.h"

#include <nlohmann/json.hpp>

#include "core/record/native_record.h"

namespace heft {
namespace {

using Json = nlohmann::ordered_json;

std::string Iso(std::int64_t time_ms) {
  char buffer[32];
  FormatTimeMs(time_ms, buffer);
  return buffer;
}

template <class T>
Json Opt(const std::optional<T>& v) {
  return v ? Json(*v) : Json(nullptr);
}

Json FindingJson(const Finding& f) {
  Json j;
  j["transition"] = TransitionName(f.transition);
  j["kind"] = KindName(f.kind);
  j["severity"] = SeverityName(f.severity);
  j["at"] = f.at;
  j["at_time"] = Iso(f.at_time_ms);
  j["onset"] = Opt(f.onset);
  j["onset_time"] = f.onset_time_ms ? Json(Iso(*f.onset_time_ms)) : Json(nullptr);
  j["end"] = Opt(f.end);
  j["size_g"] = Opt(f.size_g);
  j["size_sigma"] = Opt(f.size_sigma);
  j["level_g"] = Opt(f.level_g);
  j["period_packs"] = Opt(f.period_packs);
  j["period_s"] = Opt(f.period_s);
  j["slope_g_per_h"] = Opt(f.slope_g_per_h);
  j["detector"] = f.detector;
  return j;
}

Json SummaryJson(const LineAlarmSummary& s) {
  Json j;
  j["active"] = s.active;
  j["unacknowledged"] = s.unacknowledged;
  j["shelved"] = s.shelved;
  j["suppressed"] = s.suppressed;
  j["highest_priority"] = s.highest ? Json(AlarmPriorityName(*s.highest)) : Json(nullptr);
  return j;
}

}  // namespace

std::string AlarmTransitionToJson(const AlarmTransition& t) {
  Json j;
  j["schema"] = kAlarmJsonSchema;
  j["event_id"] = t.event_id;
  j["seq"] = t.seq;
  j["ts"] = Iso(t.time_ms);
  j["alarm"] = t.alarm_id;
  j["line"] = t.line.empty() ? Json(nullptr) : Json(t.line);
  j["area"] = t.area;
  j["kind"] = t.kind;
  j["head"] = Opt(t.head);
  j["state"] = AlarmStateName(t.to);
  j["prev_state"] = AlarmStateName(t.from);
  j["priority"] = AlarmPriorityName(t.priority);
  j["cause"] = AlarmCauseName(t.cause);
  j["why"] = t.why;
  j["who"] = t.who;
  j["note"] = t.note;
  j["annunciated"] = t.annunciate;
  j["chattering"] = t.chattering;
  j["shelved_until"] = t.shelved_until_ms ? Json(Iso(*t.shelved_until_ms)) : Json(nullptr);
  j["flood_count"] = t.flood_count > 0 ? Json(t.flood_count) : Json(nullptr);
  j["message"] = t.message;
  j["finding"] = t.finding ? FindingJson(*t.finding) : Json(nullptr);
  j["line_state"] = t.line.empty() ? Json(nullptr) : SummaryJson(t.line_summary);
  // Invalid UTF-8 in operator-supplied text is replaced, never thrown.
  return j.dump(-1, ' ', false, Json::error_handler_t::replace);
}

std::string LineStateToJson(const AlarmTransition& t) {
  Json j;
  j["schema"] = kAlarmJsonSchema;
  j["line"] = t.line;
  j["area"] = t.area;
  j["ts"] = Iso(t.time_ms);
  j["last_event_id"] = t.event_id;
  Json summary = SummaryJson(t.line_summary);
  for (auto& [key, value] : summary.items()) j[key] = value;
  return j.dump(-1, ' ', false, Json::error_handler_t::replace);
}

}  // namespace heft
