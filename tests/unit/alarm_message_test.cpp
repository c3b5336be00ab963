// alarm_message_test.cpp — template renderer, message catalog file, default
// message = OperatorMessage, transition JSON schema, `alerting:` config.
#include <catch2/catch.hpp>

#include <nlohmann/json.hpp>

#include "core/alarm/alarm_message.h"
#include "core/alarm/message_template.h"
#include "core/monitor/operator_message.h"
#include "io/alarm_json.h"
#include "io/alerting_loader.h"
#include "io/config_loader.h"

namespace heft {
namespace {

AlarmTransition ShiftRaised() {
  AlarmTransition t;
  t.seq = 7;
  t.event_id = "abc-7";
  t.alarm_id = "oats-1:shift:h3";
  t.line = "oats-1";
  t.area = "hall-a";
  t.kind = "shift";
  t.head = 3;
  t.from = AlarmState::kNormal;
  t.to = AlarmState::kActiveUnack;
  t.priority = AlarmPriority::kMedium;
  t.time_ms = 1'772'431'200'000;
  t.who = "heftd";
  t.why = "raised";
  Finding f;
  f.kind = FindingKind::kShift;
  f.line = "oats-1";
  f.head = 3;
  f.at = 900;
  f.at_time_ms = t.time_ms;
  f.onset = 850;
  f.onset_time_ms = t.time_ms - 25'000;
  f.size_g = -2.4;
  f.size_sigma = -1.2;
  f.level_g = 499.1;
  f.detector = "head_cusum";
  t.finding = f;
  t.line_summary.active = 1;
  t.line_summary.unacknowledged = 1;
  t.line_summary.highest = AlarmPriority::kMedium;
  return t;
}

}  // namespace

TEST_CASE("alarm: template renderer fills names and drops empty groups", "[alarm]") {
  TemplateValues v = {{"line", "oats-1"}, {"head", "3"}, {"note", ""}};
  CHECK(RenderTemplate("{line}[ head {head}][: {note}].", v) == "oats-1 head 3.");
  CHECK(RenderTemplate("{{literal}} [[x]] {line}", v) == "{literal} [x] oats-1");
  const std::vector<std::string_view> known = {"line", "head", "note"};
  CHECK(ValidateTemplate("{line}[ head {head}]", known).ok());
  CHECK(ValidateTemplate("{lien}", known).message() == "column 1: unknown placeholder {lien}");
  CHECK(ValidateTemplate("a {line", known).message() == "column 3: '{' is not closed");
  CHECK(ValidateTemplate("a [b [c]]]", known).message() == "column 6: groups do not nest");
  CHECK(ValidateTemplate("x ] y", known).message().rfind("column 3:", 0) == 0);
}

TEST_CASE("alarm: built-in message is OperatorMessage, templates override it", "[alarm]") {
  LineSettings line;
  line.nominal_g = 500.0;
  line.product = "Rolled oats 500 g";
  const AlarmTransition t = ShiftRaised();
  MessageCatalog empty;
  // The default for a process transition is exactly the replay message.
  CHECK(AlarmMessage(t, &line, empty) == OperatorMessage(*t.finding, line));
  MessageCatalog catalog;
  catalog.templates["shift.raised_head"] =
      "{where}: {size_g} ({size_sigma}) since {since}. {effect} Check that head's valve.";
  catalog.templates["acknowledged"] = "{alarm} ok by {who}[ ({note})]";
  CHECK(AlarmMessage(t, &line, catalog) ==
        "oats-1 head 3: -2.4 g (-1.2 sigma) since pack #850 (05:59:35Z). Level is 0.9 g BELOW "
        "the nominal 500.0 g: the average rule is at risk. Check that head's valve.");
  AlarmTransition ack = t;
  ack.why = "acknowledged";
  ack.who = "maria";
  CHECK(AlarmMessage(ack, &line, catalog) == "oats-1:shift:h3 ok by maria");
  catalog.templates.clear();
  CHECK(AlarmMessage(ack, &line, catalog) == "oats-1:shift:h3 acknowledged by maria.");
}

TEST_CASE("alarm: the shipped config/messages.yaml loads and covers every kind", "[alarm]") {
  MessageCatalog catalog;
  std::vector<std::string> errors;
  const Status s = LoadMessageCatalogFile(std::string(HEFT_SOURCE_DIR) + "/config/messages.yaml",
                                          &catalog, &errors);
  INFO(s.message());
  REQUIRE(s.ok());
  for (int k = 0; k < kFindingKindCount; ++k) {
    const std::string kind(KindName(static_cast<FindingKind>(k)));
    if (kind == "settling") continue;  // only "settling too long" is an alarm
    CHECK(catalog.templates.count(kind + ".raised") == 1);
    CHECK(catalog.templates.count(kind + ".cleared") == 1);
  }
  CHECK(catalog.templates.count("flood_started") == 1);
  // Bad templates are refused with their position.
  CHECK_FALSE(LoadMessageCatalogText("messages:\n  drift:\n    raised: \"{nope}\"\n", "m.yaml",
                                     &catalog, &errors)
                  .ok());
  REQUIRE(errors.size() == 1);
  CHECK(errors[0] == "m.yaml:3:13: messages.drift.raised: column 1: unknown placeholder {nope}");
  CHECK_FALSE(
      LoadMessageCatalogText("messages:\n  driftt: {raised: x}\n", "m.yaml", &catalog, &errors)
          .ok());
  CHECK(errors[0].rfind("m.yaml:2:3: messages.driftt: not a finding kind", 0) == 0);
}

TEST_CASE("alarm: transition JSON has the documented schema", "[alarm]") {
  AlarmTransition t = ShiftRaised();
  t.message = "oats-1 head 3: level dropped";
  const auto j = nlohmann::json::parse(AlarmTransitionToJson(t));
  const std::vector<std::string> keys = {
      "schema",        "event_id",    "seq",     "ts",      "alarm",       "line",
      "area",          "kind",        "head",    "state",   "prev_state",  "priority",
      "cause",         "why",         "who",     "note",    "annunciated", "chattering",
      "shelved_until", "flood_count", "message", "finding", "line_state"};
  std::vector<std::string> got;
  for (auto it = j.begin(); it != j.end(); ++it) got.push_back(it.key());
  // nlohmann::json sorts keys; compare as sets, and check the order in the text.
  std::vector<std::string> sorted_keys = keys;
  std::sort(sorted_keys.begin(), sorted_keys.end());
  CHECK(got == sorted_keys);
  const std::string text = AlarmTransitionToJson(t);
  CHECK(text.rfind("{\"schema\":1,\"event_id\":\"abc-7\",\"seq\":7,\"ts\":\"2026-03-02T06:00:00",
                   0) == 0);
  CHECK(j["state"] == "active_unack");
  CHECK(j["prev_state"] == "normal");
  CHECK(j["head"] == 3);
  CHECK(j["finding"]["size_g"] == -2.4);
  CHECK(j["finding"]["onset"] == 850);
  CHECK(j["line_state"]["highest_priority"] == "medium");
  CHECK(j["shelved_until"].is_null());
  // Operator text with invalid UTF-8 is replaced, not thrown.
  t.note = std::string("bad \xff byte");
  CHECK_NOTHROW(nlohmann::json::parse(AlarmTransitionToJson(t)));
}

TEST_CASE("alarm: alerting config is read and errors are positioned", "[alarm]") {
  Config config;
  std::vector<std::string> errors;
  const std::string good = R"(alerting:
  areas:
    hall-a: [oats-1, oats-2]
  priorities: {oscillation: medium}
  on_delay_s: 2
  chatter_window_s: 60
  channels:
    - {name: daemon-log, type: log}
    - name: lamp
      type: command
      argv: [/usr/local/bin/stack-lamp, --red]
      timeout_ms: 2000
      route: {areas: [hall-a], min_priority: high, operator_actions: false}
    - {name: hook, type: webhook, url: "http://127.0.0.1:8080/heft"}
    - {name: broker, type: mqtt, port: 1883, topic_prefix: millbrook/heft, tls: {insecure: true}}
)";
  Status s = LoadConfigText(good, "c.yaml", &config, &errors);
  INFO(s.message());
  REQUIRE(s.ok());
  const AlertingSettings& a = config.alerting;
  CHECK(a.alarm.area_of_line.at("oats-2") == "hall-a");
  CHECK(a.alarm.priority[static_cast<int>(FindingKind::kOscillation)] == AlarmPriority::kMedium);
  CHECK(a.alarm.on_delay_ms == 2000);
  REQUIRE(a.channels.size() == 4);
  CHECK(a.channels[1].argv.size() == 2);
  CHECK(a.channels[1].route.min_priority == AlarmPriority::kHigh);
  CHECK(a.channels[3].tls.enabled);
  CHECK(a.channels[3].topic_prefix == "millbrook/heft");

  const std::string bad = R"(alerting:
  on_delay_s: -1
  channels:
    - {name: hook, type: webhook, url: "ftp://x"}
    - {name: hook, type: mqtt, topic_prefix: "a/#", argv: [x]}
    - {name: lamp, type: command}
)";
  CHECK_FALSE(LoadConfigText(bad, "c.yaml", &config, &errors).ok());
  const std::string all = [&] {
    std::string text;
    for (const auto& e : errors) text += e + "\n";
    return text;
  }();
  INFO(all);
  CHECK(all.find("c.yaml:2:15: alerting.on_delay_s: must be between 0 and 3600") !=
        std::string::npos);
  CHECK(all.find("alerting.channels[0].url: must start with http://") != std::string::npos);
  CHECK(all.find("alerting.channels[1].name: duplicate channel name \"hook\"") !=
        std::string::npos);
  CHECK(all.find("alerting.channels[1].topic_prefix: must be topic levels") != std::string::npos);
  CHECK(all.find("alerting.channels[1].argv: is not a setting of a mqtt channel") !=
        std::string::npos);
  CHECK(all.find("alerting.channels[2]: a command channel needs \"argv\"") != std::string::npos);
}

}  // namespace heft
