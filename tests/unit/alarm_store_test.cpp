// alarm_store_test.cpp — schema version 4 (after the lots of version 3),
// recording transitions with outbox rows, idempotence, retry bookkeeping,
// expiry and operator requests.
#include <sqlite3.h>
#include <unistd.h>

#include <catch2/catch.hpp>

#include <atomic>
#include <filesystem>

#include "io/alarm_json.h"
#include "io/alarm_schema.h"
#include "io/alarm_store.h"
#include "io/sqlite_store.h"

namespace heft {
namespace {

namespace fs = std::filesystem;

struct TempDb {
  TempDb() {
    static std::atomic<int> n{0};
    dir = fs::temp_directory_path() /
          ("heft-alarm-store-" + std::to_string(::getpid()) + "-" + std::to_string(n++));
    fs::remove_all(dir);
    fs::create_directories(dir);
  }
  ~TempDb() {
    std::error_code ec;
    fs::remove_all(dir, ec);
  }
  std::string Path() const { return (dir / "heft.db").string(); }
  fs::path dir;
};

int Count(const std::string& path, const std::string& sql) {
  sqlite3* db = nullptr;
  REQUIRE(sqlite3_open_v2(path.c_str(), &db, SQLITE_OPEN_READONLY, nullptr) == SQLITE_OK);
  sqlite3_stmt* st = nullptr;
  REQUIRE(sqlite3_prepare_v2(db, sql.c_str(), -1, &st, nullptr) == SQLITE_OK);
  REQUIRE(sqlite3_step(st) == SQLITE_ROW);
  const int n = sqlite3_column_int(st, 0);
  sqlite3_finalize(st);
  sqlite3_close_v2(db);
  return n;
}

TransitionRecord Record(const std::string& event_id, const std::string& alarm,
                        std::vector<std::string> channels) {
  TransitionRecord r;
  r.transition.event_id = event_id;
  r.transition.alarm_id = alarm;
  r.transition.line = "oats-1";
  r.transition.area = "oats-1";
  r.transition.kind = "drift";
  r.transition.to = AlarmState::kActiveUnack;
  r.transition.time_ms = 1'772'431'200'000;
  r.transition.who = "heftd";
  r.transition.why = "raised";
  r.transition.message = "oats-1: level drifting.";
  r.json = AlarmTransitionToJson(r.transition);
  r.channels = std::move(channels);
  r.expires_ms = 1'772'431'200'000 + 3'600'000;
  return r;
}

}  // namespace

TEST_CASE("alarm: schema version 4 adds the alarm tables after the lots of version 3",
          "[alarm][store]") {
  TempDb t;
  REQUIRE(SqliteStore::CreateAtVersion(t.Path(), 3).ok());
  CHECK(Count(t.Path(), "SELECT count(*) FROM sqlite_master WHERE name = 'lots'") == 1);
  CHECK(Count(t.Path(), "SELECT count(*) FROM sqlite_master WHERE name = 'alarm_outbox'") == 0);
  std::unique_ptr<AlarmStore> store;
  // Read-only opening of an old file refuses with a reason, and changes nothing.
  const Status ro = AlarmStore::Open(t.Path(), AlarmStore::Mode::kReadOnly, &store);
  CHECK_FALSE(ro.ok());
  CHECK(ro.message().find("has no alarm tables") != std::string::npos);
  REQUIRE(AlarmStore::Open(t.Path(), AlarmStore::Mode::kReadWrite, &store).ok());
  // Every later migration runs too (version 5 added line_checkpoints).
  CHECK(Count(t.Path(), "PRAGMA user_version") == SqliteStore::kSchemaVersion);
  CHECK(kAlarmSchemaVersion == 4);
  for (const char* table : {"alarm_transitions", "alarm_outbox", "alarm_requests", "alarm_state",
                            "lots", "lot_verdicts", "events", "meta"}) {
    INFO(table);
    CHECK(Count(t.Path(), std::string("SELECT count(*) FROM sqlite_master WHERE name = '") + table +
                              "'") == 1);
  }
}

TEST_CASE("alarm: transitions and outbox rows are recorded once, retried and expired",
          "[alarm][store]") {
  TempDb t;
  std::unique_ptr<AlarmStore> store;
  REQUIRE(AlarmStore::Open(t.Path(), AlarmStore::Mode::kReadWrite, &store).ok());
  const std::int64_t now = 1'772'431'200'000;
  REQUIRE(store
              ->Record({Record("r-1", "oats-1:drift", {"hook", "broker"}),
                        Record("r-2", "oats-1:drift", {"hook"})},
                       now)
              .ok());
  // The same event again (a retried record) is skipped.
  REQUIRE(store->Record({Record("r-1", "oats-1:drift", {"hook", "broker"})}, now).ok());
  CHECK(Count(t.Path(), "SELECT count(*) FROM alarm_transitions") == 2);
  CHECK(Count(t.Path(), "SELECT count(*) FROM alarm_outbox") == 3);
  std::vector<OutboxItem> items;
  REQUIRE(store->PendingOutbox("hook", 10, &items).ok());
  REQUIRE(items.size() == 2);
  CHECK(items[0].event_id == "r-1");
  CHECK(items[1].event_id == "r-2");
  REQUIRE(store->MarkFailed(items[0].id, now + 500, "HTTP 503").ok());
  REQUIRE(store->PendingOutbox("hook", 10, &items).ok());
  CHECK(items[0].attempts == 1);
  CHECK(items[0].next_attempt_ms == now + 500);
  REQUIRE(store->MarkDelivered(items[0].id, now + 600).ok());
  OutboxCounts counts;
  REQUIRE(store->CountOutbox("hook", &counts).ok());
  CHECK(counts.pending == 1);
  CHECK(counts.delivered == 1);
  std::int64_t expired = 0;
  REQUIRE(store->ExpireOutbox(now + 3'600'000, &expired).ok());
  CHECK(expired == 2);  // hook r-2 and broker r-1
  REQUIRE(store->CountOutbox("broker", &counts).ok());
  CHECK(counts.expired == 1);
  std::vector<AlarmStateRow> alarms;
  REQUIRE(store->ListAlarms(&alarms).ok());
  REQUIRE(alarms.size() == 1);
  CHECK(alarms[0].last_event_id == "r-2");
  CHECK(alarms[0].state == "active_unack");
  std::vector<std::string> history;
  REQUIRE(store->Transitions("oats-1:drift", 0, &history).ok());
  CHECK(history.size() == 2);
}

TEST_CASE("alarm: operator requests are queued and answered", "[alarm][store]") {
  TempDb t;
  std::unique_ptr<AlarmStore> store;
  REQUIRE(AlarmStore::Open(t.Path(), AlarmStore::Mode::kReadWrite, &store).ok());
  AlarmRequest r;
  r.action = "shelve";
  r.alarm_id = "oats-1:drift";
  r.who = "maria";
  r.note = "hopper sensor replaced";
  r.shelve_ms = 1'800'000;
  r.requested_ms = 1;
  std::int64_t id = 0;
  REQUIRE(store->AddRequest(r, &id).ok());
  std::vector<AlarmRequest> pending;
  REQUIRE(store->PendingRequests(&pending).ok());
  REQUIRE(pending.size() == 1);
  CHECK(pending[0].shelve_ms == 1'800'000);
  CHECK(pending[0].note == "hopper sensor replaced");
  REQUIRE(store->FinishRequest(id, false, "no alarm", 2).ok());
  REQUIRE(store->PendingRequests(&pending).ok());
  CHECK(pending.empty());
  AlarmRequest answer;
  REQUIRE(store->GetRequest(id, &answer).ok());
  CHECK(answer.status == "refused");
  CHECK(answer.result == "no alarm");
  r.action = "explode";
  CHECK_FALSE(store->AddRequest(r, &id).ok());  // CHECK constraint
}

}  // namespace heft
