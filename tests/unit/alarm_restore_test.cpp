// alarm_restore_test.cpp — alarms carried over a heftd restart: the states
// an earlier run left (ISA-18.2 B, C, D and shelved, operations.md §1.2) come
// back with their timers, a re-raise attaches without a new transition, the
// sequence continues, and the round trip through the alarm tables
// (AlarmStore::Unfinished) gives the AlarmBook what it had.
#include <unistd.h>

#include <catch2/catch.hpp>

#include <atomic>
#include <filesystem>
#include <string>
#include <vector>

#include "core/alarm/alarm_book.h"
#include "io/alarm_json.h"
#include "io/alarm_store.h"

namespace heft {
namespace {

constexpr std::int64_t kT0 = 1'772'431'200'000;  // 2026-03-02T06:00:00Z

Finding F(const std::string& line, FindingKind kind, Transition tr, std::optional<int> head = {}) {
  Finding f;
  f.line = line;
  f.kind = kind;
  f.transition = tr;
  f.head = head;
  f.severity = Severity::kWarning;
  f.size_sigma = 1.5;
  return f;
}
const Transition kUp = Transition::kRaised;
const Transition kDown = Transition::kCleared;

AlarmSettings Plain() {
  AlarmSettings s;
  s.realarm_deadband_ms = 0;
  return s;
}

std::vector<AlarmTransition> Feed(AlarmBook& book, std::vector<Finding> findings, std::int64_t t) {
  std::vector<AlarmTransition> out;
  book.OnFindings(findings, t, &out);
  return out;
}

RestoredAlarm Carried(const std::string& id, const std::string& line, const std::string& kind,
                      AlarmState state, std::int64_t since) {
  RestoredAlarm r;
  r.alarm_id = id;
  r.line = line;
  r.area = line;
  r.kind = kind;
  r.state = state;
  r.priority = AlarmPriority::kMedium;
  r.since_ms = since;
  return r;
}

AlarmBook::AlarmView View(const AlarmBook& book, const std::string& id) {
  for (const auto& v : book.Alarms()) {
    if (v.alarm_id == id) return v;
  }
  FAIL("no alarm " << id);
  return {};
}

struct TempDb {
  TempDb() {
    static std::atomic<int> n{0};
    dir = std::filesystem::temp_directory_path() /
          ("heft-alarm-restore-" + std::to_string(::getpid()) + "-" + std::to_string(n++));
    std::filesystem::remove_all(dir);
    std::filesystem::create_directories(dir);
  }
  ~TempDb() {
    std::error_code ec;
    std::filesystem::remove_all(dir, ec);
  }
  std::string Path() const { return (dir / "heft.db").string(); }
  std::filesystem::path dir;
};

}  // namespace

TEST_CASE("restore: a carried active alarm that is raised again attaches without a transition",
          "[alarm][restore]") {
  AlarmBook book(Plain(), "run2");
  std::vector<AlarmTransition> out;
  book.Restore({Carried("oats-1:shift", "oats-1", "shift", AlarmState::kActiveUnack, kT0)}, 41,
               kT0 + 60'000, &out);
  CHECK(out.empty());
  CHECK(book.next_seq() == 41);
  CHECK(View(book, "oats-1:shift").state == AlarmState::kActiveUnack);

  // The restarted monitor settles first: that must not hide the carried alarm.
  CHECK(Feed(book, {F("oats-1", FindingKind::kSettling, kUp)}, kT0 + 61'000).empty());
  CHECK(Feed(book, {F("oats-1", FindingKind::kSettling, kDown)}, kT0 + 70'000).empty());
  // The detectors see the same condition again: attached, nothing to send.
  CHECK(Feed(book, {F("oats-1", FindingKind::kShift, kUp)}, kT0 + 80'000).empty());
  CHECK(View(book, "oats-1:shift").state == AlarmState::kActiveUnack);

  // A new alarm continues the numbering of the earlier run.
  auto t = Feed(book, {F("oats-1", FindingKind::kDrift, kUp)}, kT0 + 90'000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].seq == 41);
  CHECK(t[0].event_id == "run2-41");
  CHECK(t[0].line_summary.active == 2);

  // After attaching, the usual rules: ack → C, clear → A.
  REQUIRE(book.Acknowledge("oats-1:shift", "maria", "", kT0 + 91'000, &out).ok());
  out.clear();
  t = Feed(book, {F("oats-1", FindingKind::kShift, kDown)}, kT0 + 92'000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].from == AlarmState::kActiveAck);
  CHECK(t[0].to == AlarmState::kNormal);
}

TEST_CASE("restore: a carried alarm cleared by this run returns to normal unacknowledged",
          "[alarm][restore]") {
  AlarmBook book(Plain(), "r");
  std::vector<AlarmTransition> out;
  book.Restore({Carried("oats-1:outlier", "oats-1", "outlier", AlarmState::kActiveUnack, kT0)}, 1,
               kT0, &out);
  auto t = Feed(book, {F("oats-1", FindingKind::kOutlier, kDown)}, kT0 + 5000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].to == AlarmState::kClearedUnack);
  CHECK(t[0].why == "cleared");
}

TEST_CASE("restore: acknowledged, cleared-unack and shelved alarms keep their state and timers",
          "[alarm][restore]") {
  AlarmSettings s = Plain();
  s.realarm_ms = 600'000;
  AlarmBook book(s, "r");
  RestoredAlarm acked = Carried("oats-1:drift", "oats-1", "drift", AlarmState::kActiveAck, kT0);
  RestoredAlarm cleared =
      Carried("honey-2:spread", "honey-2", "spread", AlarmState::kClearedUnack, kT0);
  RestoredAlarm shelved_on = Carried("oats-1:stuck", "oats-1", "stuck", AlarmState::kShelved, kT0);
  shelved_on.shelved_until_ms = kT0 + 120'000;
  shelved_on.shelved_while_active = true;
  RestoredAlarm shelved_off =
      Carried("honey-2:outlier", "honey-2", "outlier", AlarmState::kShelved, kT0);
  shelved_off.shelved_until_ms = kT0 + 120'000;
  RestoredAlarm normal = Carried("oats-1:shift", "oats-1", "shift", AlarmState::kNormal, kT0);
  RestoredAlarm suppressed =
      Carried("oats-1:spread", "oats-1", "spread", AlarmState::kSuppressed, kT0);
  std::vector<AlarmTransition> out;
  book.Restore({acked, cleared, shelved_on, shelved_off, normal, suppressed}, 7, kT0 + 1000, &out);
  CHECK(out.empty());
  CHECK(book.Alarms().size() == 4);  // normal and suppressed are not carried

  // The shelve expiry of the earlier run still holds: back to B if the
  // condition was true when shelved, else A (operations.md §1.2 notes).
  book.Advance(kT0 + 119'000, &out);
  CHECK(out.empty());
  book.Advance(kT0 + 120'000, &out);
  REQUIRE(out.size() == 2);
  for (const AlarmTransition& t : out) {
    CHECK(t.why == "shelve_expired");
    CHECK(t.to == (t.alarm_id == "oats-1:stuck" ? AlarmState::kActiveUnack : AlarmState::kNormal));
  }
  out.clear();
  // Re-alarm counts from the acknowledgement of the earlier run.
  book.Advance(kT0 + 600'000, &out);
  REQUIRE(out.size() == 1);
  CHECK(out[0].alarm_id == "oats-1:drift");
  CHECK(out[0].why == "realarm");
  CHECK(out[0].to == AlarmState::kActiveUnack);
  out.clear();
  // Cleared-unack: an acknowledgement ends it; had the condition come back,
  // that would have been a new activation.
  REQUIRE(book.Acknowledge("honey-2:spread", "maria", "", kT0 + 601'000, &out).ok());
  REQUIRE(out.size() == 1);
  CHECK(out[0].to == AlarmState::kNormal);
  CHECK(out[0].seq == 10);  // 7, 8, 9 went to the expiries and the re-alarm
}

TEST_CASE("restore: an active flood summary ends at the restart; numbering never goes back",
          "[alarm][restore]") {
  AlarmBook book(Plain(), "r", 100);
  RestoredAlarm flood = Carried("hall-a:flood", "", "flood", AlarmState::kActiveUnack, kT0);
  flood.area = "hall-a";
  std::vector<AlarmTransition> out;
  book.Restore({flood, flood}, 5, kT0 + 1000, &out);
  REQUIRE(out.size() == 1);
  CHECK(out[0].alarm_id == "hall-a:flood");
  CHECK(out[0].why == "flood_ended");
  CHECK(out[0].to == AlarmState::kClearedUnack);
  CHECK(out[0].seq == 100);
  CHECK(book.Alarms().size() == 1);
}

TEST_CASE("restore: the alarm tables give the next run what the last one left",
          "[alarm][restore][store]") {
  TempDb tmp;
  std::unique_ptr<AlarmStore> store;
  REQUIRE(AlarmStore::Open(tmp.Path(), AlarmStore::Mode::kReadWrite, &store).ok());
  std::vector<RestoredAlarm> unfinished;
  std::int64_t last_seq = -1;
  REQUIRE(store->Unfinished(&unfinished, &last_seq).ok());
  CHECK(unfinished.empty());
  CHECK(last_seq == 0);

  // First run: shift on head 3 active, drift acknowledged, stuck shelved
  // while active, outlier raised and cleared and acknowledged (normal).
  AlarmSettings s = Plain();
  AlarmBook first(s, "a");
  std::vector<AlarmTransition> all =
      Feed(first,
           {F("oats-1", FindingKind::kShift, kUp, 3), F("oats-1", FindingKind::kDrift, kUp),
            F("oats-1", FindingKind::kStuck, kUp), F("oats-1", FindingKind::kOutlier, kUp)},
           kT0);
  REQUIRE(first.Acknowledge("oats-1:drift", "maria", "", kT0 + 1000, &all).ok());
  REQUIRE(first.Shelve("oats-1:stuck", 3'600'000, "maria", "repair", kT0 + 2000, &all).ok());
  for (auto& t : Feed(first, {F("oats-1", FindingKind::kOutlier, kDown)}, kT0 + 3000)) {
    all.push_back(t);
  }
  REQUIRE(first.Acknowledge("oats-1:outlier", "maria", "", kT0 + 4000, &all).ok());
  std::vector<TransitionRecord> records;
  for (const AlarmTransition& t : all) {
    records.push_back({t, AlarmTransitionToJson(t), {}, 0});
  }
  REQUIRE(store->Record(records, kT0 + 5000).ok());

  REQUIRE(store->Unfinished(&unfinished, &last_seq).ok());
  CHECK(last_seq == first.next_seq() - 1);
  REQUIRE(unfinished.size() == 3);
  CHECK(unfinished[0].alarm_id == "oats-1:drift");
  CHECK(unfinished[0].state == AlarmState::kActiveAck);
  CHECK(unfinished[0].since_ms == kT0 + 1000);
  CHECK(unfinished[1].alarm_id == "oats-1:shift:h3");
  CHECK(unfinished[1].state == AlarmState::kActiveUnack);
  CHECK(unfinished[1].head == 3);
  CHECK(unfinished[1].priority == AlarmPriority::kMedium);
  CHECK(unfinished[2].alarm_id == "oats-1:stuck");
  CHECK(unfinished[2].state == AlarmState::kShelved);
  CHECK(unfinished[2].shelved_until_ms == kT0 + 2000 + 3'600'000);
  CHECK(unfinished[2].shelved_while_active);

  // Second run: the same view, the head alarm attaches, numbering continues.
  AlarmBook second(s, "b");
  std::vector<AlarmTransition> out;
  second.Restore(unfinished, last_seq + 1, kT0 + 60'000, &out);
  CHECK(out.empty());
  for (const auto& before : first.Alarms()) {
    if (before.state == AlarmState::kNormal) continue;
    const auto after = View(second, before.alarm_id);
    CHECK(after.state == before.state);
    CHECK(after.priority == before.priority);
    CHECK(after.head == before.head);
    CHECK(after.shelved_until_ms == before.shelved_until_ms);
  }
  CHECK(Feed(second, {F("oats-1", FindingKind::kShift, kUp, 3)}, kT0 + 61'000).empty());
  auto t = Feed(second, {F("oats-1", FindingKind::kShift, kUp, 5)}, kT0 + 62'000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].seq == last_seq + 1);
  CHECK(t[0].event_id == "b-" + std::to_string(last_seq + 1));
}

}  // namespace heft
