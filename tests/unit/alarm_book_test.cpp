// alarm_book_test.cpp — the alarm lifecycle (ISA-18.2 / IEC 62682 states):
// acknowledge paths, on/off delay, re-alarm deadband, chattering, shelving
// expiry, suppression while settling, flood summary on a generated storm.
// Benchmarks from operations.md §1.6/§1.7 (3 activations in 1 min =
// chattering; more than 10 starts in 10 min = flood, ends below 5).
#include <catch2/catch.hpp>

#include <string>
#include <vector>

#include "core/alarm/alarm_book.h"

namespace heft {
namespace {

constexpr std::int64_t kT0 = 1'772'431'200'000;  // 2026-03-02T06:00:00Z

Finding F(const std::string& line, FindingKind kind, Transition tr, std::optional<int> head = {},
          Severity sev = Severity::kWarning) {
  Finding f;
  f.line = line;
  f.kind = kind;
  f.transition = tr;
  f.head = head;
  f.severity = sev;
  f.size_sigma = 1.5;
  return f;
}
const Transition kUp = Transition::kRaised;
const Transition kDown = Transition::kCleared;

AlarmSettings Plain() {
  AlarmSettings s;
  s.on_delay_ms = 0;
  s.off_delay_ms = 0;
  s.realarm_deadband_ms = 0;
  return s;
}

struct Book {
  explicit Book(AlarmSettings s) : book(std::move(s), "run") {}
  std::vector<AlarmTransition> Feed(const Finding& f, std::int64_t t) {
    std::vector<AlarmTransition> out;
    book.OnFindings({f}, t, &out);
    return out;
  }
  std::vector<AlarmTransition> At(std::int64_t t) {
    std::vector<AlarmTransition> out;
    book.Advance(t, &out);
    return out;
  }
  AlarmBook book;
};

}  // namespace

TEST_CASE("alarm: raise, acknowledge and clear walk the ISA-18.2 states", "[alarm]") {
  Book b(Plain());
  auto t = b.Feed(F("oats-1", FindingKind::kShift, kUp), kT0);
  REQUIRE(t.size() == 1);
  CHECK(t[0].alarm_id == "oats-1:shift");
  CHECK(t[0].from == AlarmState::kNormal);
  CHECK(t[0].to == AlarmState::kActiveUnack);
  CHECK(t[0].priority == AlarmPriority::kMedium);
  CHECK(t[0].event_id == "run-1");
  CHECK(t[0].line_summary.active == 1);
  std::vector<AlarmTransition> out;
  REQUIRE(b.book.Acknowledge("oats-1:shift", "maria", "checked the hopper", kT0 + 1000, &out).ok());
  REQUIRE(out.size() == 1);
  CHECK(out[0].to == AlarmState::kActiveAck);
  CHECK(out[0].who == "maria");
  CHECK(out[0].cause == AlarmCause::kOperator);
  t = b.Feed(F("oats-1", FindingKind::kShift, kDown), kT0 + 2000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].to == AlarmState::kNormal);  // C -> A

  // Clear before acknowledgement: B -> D, then ack D -> A.
  b.Feed(F("oats-1", FindingKind::kDrift, kUp), kT0 + 3000);
  t = b.Feed(F("oats-1", FindingKind::kDrift, kDown), kT0 + 4000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].to == AlarmState::kClearedUnack);
  out.clear();
  CHECK_FALSE(b.book.Acknowledge("oats-1:nothing", "maria", "", kT0 + 5000, &out).ok());
  REQUIRE(b.book.Acknowledge("oats-1:drift", "maria", "", kT0 + 5000, &out).ok());
  CHECK(out.back().to == AlarmState::kNormal);
  // Nothing left to acknowledge.
  CHECK_FALSE(b.book.Acknowledge("oats-1:drift", "maria", "", kT0 + 6000, &out).ok());
}

TEST_CASE("alarm: priority from kind and size, per head", "[alarm]") {
  Book b(Plain());
  Finding big = F("oats-1", FindingKind::kShift, kUp, 3);
  big.size_sigma = -3.5;  // >= escalate_sigma (3): one level up
  auto t = b.Feed(big, kT0);
  REQUIRE(t.size() == 1);
  CHECK(t[0].alarm_id == "oats-1:shift:h3");
  CHECK(t[0].priority == AlarmPriority::kHigh);
  t = b.Feed(F("oats-1", FindingKind::kOscillation, kUp), kT0);
  CHECK(t[0].priority == AlarmPriority::kLow);
  // Escalation of an open alarm (outlier burst) re-annunciates.
  b.Feed(F("oats-1", FindingKind::kOutlier, kUp), kT0);
  std::vector<AlarmTransition> out;
  REQUIRE(b.book.Acknowledge("oats-1:outlier", "ann", "", kT0 + 1, &out).ok());
  t = b.Feed(F("oats-1", FindingKind::kOutlier, kUp, {}, Severity::kAlarm), kT0 + 2);
  REQUIRE(t.size() == 1);
  CHECK(t[0].why == "escalated");
  CHECK(t[0].to == AlarmState::kActiveUnack);
  CHECK(t[0].priority == AlarmPriority::kMedium);
}

TEST_CASE("alarm: on-delay drops a fleeting raise, off-delay holds a short clear", "[alarm]") {
  AlarmSettings s = Plain();
  s.on_delay_ms = 10'000;
  s.off_delay_ms = 20'000;
  Book b(s);
  CHECK(b.Feed(F("oats-1", FindingKind::kShift, kUp), kT0).empty());
  CHECK(b.At(kT0 + 9'999).empty());
  CHECK(b.Feed(F("oats-1", FindingKind::kShift, kDown), kT0 + 9'999).empty());
  CHECK(b.At(kT0 + 60'000).empty());
  CHECK(b.book.counters().fleeting_dropped == 1);

  CHECK(b.Feed(F("oats-1", FindingKind::kShift, kUp), kT0 + 100'000).empty());
  auto t = b.At(kT0 + 110'000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].to == AlarmState::kActiveUnack);
  // A clear that is undone within the off-delay changes nothing.
  CHECK(b.Feed(F("oats-1", FindingKind::kShift, kDown), kT0 + 120'000).empty());
  CHECK(b.Feed(F("oats-1", FindingKind::kShift, kUp), kT0 + 130'000).empty());
  CHECK(b.At(kT0 + 200'000).empty());
  // A clear that lasts the off-delay returns the alarm.
  CHECK(b.Feed(F("oats-1", FindingKind::kShift, kDown), kT0 + 200'000).empty());
  CHECK(b.At(kT0 + 219'999).empty());
  t = b.At(kT0 + 220'000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].to == AlarmState::kClearedUnack);
}

TEST_CASE("alarm: re-alarm deadband makes a quick re-raise wait", "[alarm]") {
  AlarmSettings s = Plain();
  s.realarm_deadband_ms = 30'000;
  Book b(s);
  REQUIRE(b.Feed(F("oats-1", FindingKind::kDrift, kUp), kT0).size() == 1);
  REQUIRE(b.Feed(F("oats-1", FindingKind::kDrift, kDown), kT0 + 5'000).size() == 1);
  // Re-raised 5 s after the clear: inside the deadband, not annunciated yet.
  CHECK(b.Feed(F("oats-1", FindingKind::kDrift, kUp), kT0 + 10'000).empty());
  CHECK(b.book.counters().deadband_held == 1);
  // Flips back within the deadband: never annunciated.
  CHECK(b.Feed(F("oats-1", FindingKind::kDrift, kDown), kT0 + 20'000).empty());
  CHECK(b.At(kT0 + 100'000).empty());
  // Re-raised and persisting: annunciated when the deadband has passed.
  CHECK(b.Feed(F("oats-1", FindingKind::kDrift, kUp), kT0 + 21'000).empty());
  auto t = b.At(kT0 + 51'000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].to == AlarmState::kActiveUnack);
  CHECK(t[0].from == AlarmState::kClearedUnack);
}

TEST_CASE("alarm: chattering is reported once and held", "[alarm]") {
  Book b(Plain());  // chatter_count 3 within 60 s (operations.md §1.7)
  int annunciated = 0;
  int chatter_reports = 0;
  for (int i = 0; i < 10; ++i) {
    const std::int64_t t = kT0 + i * 5'000;  // raise/clear every 5 s for 50 s
    for (const auto& tr : b.Feed(F("oats-1", FindingKind::kSpread, kUp), t)) {
      annunciated += tr.annunciate;
      chatter_reports += tr.why == "chattering";
    }
    for (const auto& tr : b.Feed(F("oats-1", FindingKind::kSpread, kDown), t + 2'000)) {
      annunciated += tr.annunciate;
    }
  }
  CHECK(chatter_reports == 1);
  // raise, clear, raise, clear, chattering — then nothing while held.
  CHECK(annunciated == 5);
  auto views = b.book.Alarms();
  REQUIRE(views.size() == 1);
  CHECK(views[0].chattering);
  CHECK(views[0].state == AlarmState::kActiveUnack);
  // Quiet for a whole window: released.
  const std::int64_t last_clear = kT0 + 9 * 5'000 + 2'000;
  CHECK(b.At(last_clear + 59'999).empty());
  auto t = b.At(last_clear + 60'000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].why == "chatter_ended");
  CHECK(t[0].to == AlarmState::kClearedUnack);
  CHECK(b.book.counters().chatter_reports == 1);
}

TEST_CASE("alarm: shelving hides, expires and is bounded", "[alarm]") {
  Book b(Plain());
  b.Feed(F("honey-2", FindingKind::kDrift, kUp), kT0);
  std::vector<AlarmTransition> out;
  CHECK_FALSE(b.book.Shelve("honey-2:drift", 9 * 3'600'000, "joe", "", kT0, &out).ok());
  REQUIRE(b.book.Shelve("honey-2:drift", 600'000, "joe", "valve on order", kT0, &out).ok());
  REQUIRE(out.size() == 1);
  CHECK(out[0].to == AlarmState::kShelved);
  CHECK(out[0].shelved_until_ms == kT0 + 600'000);
  CHECK(out[0].note == "valve on order");
  CHECK_FALSE(b.book.Shelve("honey-2:drift", 600'000, "joe", "", kT0, &out).ok());
  // Condition changes while shelved are tracked, not shown.
  CHECK(b.Feed(F("honey-2", FindingKind::kDrift, kDown), kT0 + 1000).empty());
  CHECK(b.Feed(F("honey-2", FindingKind::kDrift, kUp), kT0 + 2000).empty());
  CHECK(b.At(kT0 + 599'999).empty());
  auto t = b.At(kT0 + 600'000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].why == "shelve_expired");
  CHECK(t[0].cause == AlarmCause::kSystem);
  CHECK(t[0].to == AlarmState::kActiveUnack);  // still true: back to B
  // Manual unshelve of an alarm whose condition has gone: back to A.
  out.clear();
  REQUIRE(b.book.Shelve("honey-2:drift", {}, "joe", "", kT0 + 700'000, &out).ok());
  b.Feed(F("honey-2", FindingKind::kDrift, kDown), kT0 + 701'000);
  out.clear();
  REQUIRE(b.book.Unshelve("honey-2:drift", "joe", "", kT0 + 702'000, &out).ok());
  REQUIRE(out.size() == 1);
  CHECK(out[0].to == AlarmState::kNormal);
  CHECK_FALSE(b.book.Unshelve("honey-2:drift", "joe", "", kT0 + 703'000, &out).ok());
}

TEST_CASE("alarm: suppressed by design while the line settles or is silent", "[alarm]") {
  Book b(Plain());
  // Settling (info) is not an alarm; it hides the line's other alarms.
  CHECK(b.Feed(F("oats-1", FindingKind::kSettling, kUp, {}, Severity::kInfo), kT0).empty());
  auto t = b.Feed(F("oats-1", FindingKind::kShift, kUp), kT0 + 1000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].to == AlarmState::kSuppressed);
  CHECK_FALSE(t[0].annunciate);
  t = b.Feed(F("oats-1", FindingKind::kSettling, kDown, {}, Severity::kInfo), kT0 + 2000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].why == "unsuppressed");
  CHECK(t[0].to == AlarmState::kActiveUnack);
  CHECK(t[0].annunciate);
  // Silence is an alarm itself and hides the others until the line runs again.
  std::vector<AlarmTransition> out;
  b.book.OnFindings({F("oats-1", FindingKind::kSilence, kUp)}, kT0 + 3000, &out);
  REQUIRE(out.size() == 2);
  CHECK(out[0].alarm_id == "oats-1:silence");
  CHECK(out[0].to == AlarmState::kActiveUnack);
  CHECK(out[1].alarm_id == "oats-1:shift");
  CHECK(out[1].to == AlarmState::kSuppressed);
  // Restart in one batch: silence clears, shift clears, settling starts —
  // the shift alarm does not flicker back into view.
  out.clear();
  b.book.OnFindings(
      {F("oats-1", FindingKind::kSilence, kDown), F("oats-1", FindingKind::kShift, kDown),
       F("oats-1", FindingKind::kSettling, kUp, {}, Severity::kInfo)},
      kT0 + 4000, &out);
  for (const auto& tr : out) {
    INFO(tr.alarm_id << " " << AlarmStateName(tr.to));
    CHECK(tr.to != AlarmState::kActiveUnack);
  }
  // A settling that takes too long is an alarm (low) and is not suppressed.
  t = b.Feed(F("oats-1", FindingKind::kSettling, kUp, {}, Severity::kAlarm), kT0 + 5000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].alarm_id == "oats-1:settling");
  CHECK(t[0].to == AlarmState::kActiveUnack);
}

TEST_CASE("alarm: flood summary on a generated storm", "[alarm]") {
  AlarmSettings s = Plain();
  s.area_of_line = {{"oats-1", "hall-a"}, {"oats-2", "hall-a"}, {"honey-2", "jars"}};
  Book b(s);
  // 30 distinct alarms in hall-a within 5 minutes (one every 10 s).
  std::vector<AlarmTransition> all;
  const FindingKind kinds[] = {FindingKind::kShift, FindingKind::kDrift, FindingKind::kSpread};
  for (int i = 0; i < 30; ++i) {
    const std::string line = i % 2 == 0 ? "oats-1" : "oats-2";
    auto t = b.Feed(F(line, kinds[i % 3], kUp, i / 6), kT0 + i * 10'000);
    all.insert(all.end(), t.begin(), t.end());
  }
  // Another area is not affected.
  auto other = b.Feed(F("honey-2", FindingKind::kShift, kUp), kT0 + 300'000);
  REQUIRE(other.size() == 1);
  CHECK(other[0].annunciate);
  int starts = 0, annunciated_starts = 0, floods = 0;
  for (const auto& t : all) {
    if (t.kind == "flood") {
      ++floods;
      CHECK(t.why == "flood_started");
      CHECK(t.flood_count == 11);  // the 11th start in 10 min tips it
      CHECK(t.priority == AlarmPriority::kHigh);
      CHECK(t.alarm_id == "hall-a:flood");
      CHECK(t.annunciate);
      continue;
    }
    ++starts;
    annunciated_starts += t.annunciate;
  }
  CHECK(starts == 30);
  CHECK(floods == 1);
  CHECK(annunciated_starts == 10);
  CHECK(b.book.InFlood("hall-a"));
  CHECK_FALSE(b.book.InFlood("jars"));
  CHECK(b.book.counters().flood_held == 20);
  // Starts until kT0+290 s; the window is 10 min. Fewer than 5 remain in the
  // window once the start at kT0+250 s has aged out (kT0+850 s).
  CHECK(b.At(kT0 + 840'000).empty());
  auto end = b.At(kT0 + 860'000);
  REQUIRE(end.size() == 1);
  CHECK(end[0].why == "flood_ended");
  CHECK(end[0].flood_count == 20);
  CHECK(end[0].to == AlarmState::kClearedUnack);
  CHECK_FALSE(b.book.InFlood("hall-a"));
  std::vector<AlarmTransition> out;
  REQUIRE(b.book.Acknowledge("hall-a:flood", "maria", "", kT0 + 870'000, &out).ok());
  // After the flood, single messages are annunciated again.
  auto t = b.Feed(F("oats-1", FindingKind::kStuck, kUp), kT0 + 900'000);
  REQUIRE(t.size() == 1);
  CHECK(t[0].annunciate);
}

}  // namespace heft
