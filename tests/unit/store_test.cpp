// store_test.cpp — SqliteStore and MemoryStore: round trips, filters, batch
// atomicity, migrations, version refusal, read-only access, retention.
#include <sqlite3.h>

#include <atomic>
#include <chrono>
#include <filesystem>
#include <fstream>
#include <memory>
#include <string>
#include <vector>

#include <unistd.h>
#include <catch2/catch.hpp>

#include "io/memory_store.h"
#include "io/sqlite_store.h"

namespace heft {
namespace {

namespace fs = std::filesystem;

// A fresh folder under the system temp dir, removed with everything in it.
class TempDir {
 public:
  TempDir() {
    static std::atomic<int> counter{0};
    path_ = fs::temp_directory_path() /
            ("heft-store-test-" + std::to_string(::getpid()) + "-" + std::to_string(counter++));
    fs::remove_all(path_);
    fs::create_directories(path_);
  }
  ~TempDir() {
    std::error_code ec;
    fs::remove_all(path_, ec);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;
  std::string File(const std::string& name) const { return (path_ / name).string(); }

 private:
  fs::path path_;
};

// A raw sqlite3 connection, for looking under the store and for a second writer.
class RawDb {
 public:
  explicit RawDb(const std::string& path) {
    REQUIRE(sqlite3_open_v2(path.c_str(), &db_, SQLITE_OPEN_READWRITE, nullptr) == SQLITE_OK);
    sqlite3_busy_timeout(db_, 5000);
  }
  ~RawDb() { sqlite3_close_v2(db_); }
  RawDb(const RawDb&) = delete;
  RawDb& operator=(const RawDb&) = delete;

  void Exec(const std::string& sql) {
    char* error = nullptr;
    const int rc = sqlite3_exec(db_, sql.c_str(), nullptr, nullptr, &error);
    INFO(sql << " -> " << (error ? error : ""));
    sqlite3_free(error);
    REQUIRE(rc == SQLITE_OK);
  }
  std::int64_t Int(const std::string& sql) {
    sqlite3_stmt* stmt = nullptr;
    REQUIRE(sqlite3_prepare_v2(db_, sql.c_str(), -1, &stmt, nullptr) == SQLITE_OK);
    REQUIRE(sqlite3_step(stmt) == SQLITE_ROW);
    const std::int64_t value = sqlite3_column_int64(stmt, 0);
    sqlite3_finalize(stmt);
    return value;
  }
  std::string Text(const std::string& sql) {
    sqlite3_stmt* stmt = nullptr;
    REQUIRE(sqlite3_prepare_v2(db_, sql.c_str(), -1, &stmt, nullptr) == SQLITE_OK);
    REQUIRE(sqlite3_step(stmt) == SQLITE_ROW);
    const unsigned char* text = sqlite3_column_text(stmt, 0);
    std::string value = text ? reinterpret_cast<const char*>(text) : "";
    sqlite3_finalize(stmt);
    return value;
  }
  // The `detail` column of every EXPLAIN QUERY PLAN row, one per line.
  std::string Plan(const std::string& sql) {
    sqlite3_stmt* stmt = nullptr;
    REQUIRE(sqlite3_prepare_v2(db_, ("EXPLAIN QUERY PLAN " + sql).c_str(), -1, &stmt, nullptr) ==
            SQLITE_OK);
    std::string plan;
    while (sqlite3_step(stmt) == SQLITE_ROW) {
      plan += reinterpret_cast<const char*>(sqlite3_column_text(stmt, 3));
      plan += "\n";
    }
    sqlite3_finalize(stmt);
    return plan;
  }
  sqlite3* db() { return db_; }

 private:
  sqlite3* db_ = nullptr;
};

std::unique_ptr<SqliteStore> OpenOrFail(const std::string& path,
                                        SqliteStore::Mode mode = SqliteStore::Mode::kReadWrite) {
  std::unique_ptr<SqliteStore> store;
  const Status status = SqliteStore::Open(path, mode, &store);
  INFO(status.message());
  REQUIRE(status.ok());
  REQUIRE(store != nullptr);
  return store;
}

// Millbrook Oat Co. (invented): oats-1 fills 500 g bags on a 12-head filler.
constexpr std::int64_t kT0 = 1772431200000;  // 2026-03-02T06:00:00Z

EventRow FullEvent() {
  EventRow row;
  Finding& f = row.finding;
  f.transition = Transition::kRaised;
  f.kind = FindingKind::kShift;
  f.severity = Severity::kAlarm;
  f.line = "oats-1";
  f.at = 1234;
  f.at_time_ms = kT0 + 877500;
  f.onset = 1180;
  f.onset_time_ms = kT0 - 108000;
  f.end = 1233;
  f.size_g = -2.375;
  f.size_sigma = -1.9;
  f.level_g = 501.625;
  f.period_packs = 12.0;
  f.head = 7;
  f.detector = "cusum";
  row.message = "Line oats-1: fill weight down 2.4 g on head 7 — check the \"auger\".";
  row.source = "tcp:127.0.0.1:41234";
  row.recorded_ms = kT0 + 877512;
  return row;
}

// Every optional left unset, empty detector, message and source.
EventRow BareEvent() {
  EventRow row;
  Finding& f = row.finding;
  f.transition = Transition::kCleared;
  f.kind = FindingKind::kSilence;
  f.severity = Severity::kInfo;
  f.line = "honey-2";
  f.at = 0;
  f.at_time_ms = 0;
  row.recorded_ms = 5;
  return row;
}

void CheckSameEvent(const EventRow& got, const EventRow& want) {
  const Finding& g = got.finding;
  const Finding& w = want.finding;
  CHECK(g.transition == w.transition);
  CHECK(g.kind == w.kind);
  CHECK(g.severity == w.severity);
  CHECK(g.line == w.line);
  CHECK(g.at == w.at);
  CHECK(g.at_time_ms == w.at_time_ms);
  CHECK(g.onset == w.onset);
  CHECK(g.onset_time_ms == w.onset_time_ms);
  CHECK(g.end == w.end);
  // REAL columns are IEEE doubles: values come back bit for bit.
  CHECK(g.size_g == w.size_g);
  CHECK(g.size_sigma == w.size_sigma);
  CHECK(g.level_g == w.level_g);
  CHECK(g.period_packs == w.period_packs);
  CHECK(g.head == w.head);
  CHECK(g.detector == w.detector);
  CHECK(got.message == want.message);
  CHECK(got.source == want.source);
  CHECK(got.recorded_ms == want.recorded_ms);
}

EventRow EventAt(const std::string& line, FindingKind kind, std::int64_t at_time_ms,
                 std::int64_t at) {
  EventRow row;
  row.finding.line = line;
  row.finding.kind = kind;
  row.finding.at = at;
  row.finding.at_time_ms = at_time_ms;
  row.finding.detector = "test";
  row.message = line + " " + std::string(KindName(kind)) + " at " + std::to_string(at);
  row.recorded_ms = at_time_ms + 10;
  return row;
}

std::vector<std::int64_t> Ats(const std::vector<EventRow>& rows) {
  std::vector<std::int64_t> ats;
  for (const auto& row : rows) ats.push_back(row.finding.at);
  return ats;
}

// The same filter checks for any Store, so both implementations must agree.
void CheckFilters(Store& store) {
  // Stored deliberately out of time order: results follow storage order.
  const std::vector<EventRow> events = {
      EventAt("oats-1", FindingKind::kShift, kT0 + 3000, 1),
      EventAt("honey-2", FindingKind::kDrift, kT0 + 1000, 2),
      EventAt("oats-1", FindingKind::kDrift, kT0 + 2000, 3),
      EventAt("oats-1", FindingKind::kShift, kT0 + 5000, 4),
      EventAt("honey-2", FindingKind::kShift, kT0 + 4000, 5),
  };
  REQUIRE(store.WriteBatch(events, {}).ok());
  std::vector<EventRow> out;
  const auto run = [&](const EventQuery& q) {
    const Status s = store.QueryEvents(q, &out);
    INFO(s.message());
    REQUIRE(s.ok());
    return Ats(out);
  };
  using V = std::vector<std::int64_t>;
  EventQuery q;
  CHECK(run(q) == V{1, 2, 3, 4, 5});
  q.line = "oats-1";
  CHECK(run(q) == V{1, 3, 4});
  q.kind = FindingKind::kShift;
  CHECK(run(q) == V{1, 4});
  q = {};
  q.kind = FindingKind::kDrift;
  CHECK(run(q) == V{2, 3});
  q = {};
  q.since_ms = kT0 + 3000;  // inclusive
  CHECK(run(q) == V{1, 4, 5});
  q.until_ms = kT0 + 5000;  // exclusive
  CHECK(run(q) == V{1, 5});
  q = {};
  q.until_ms = kT0 + 2000;
  CHECK(run(q) == V{2});
  q = {};
  q.limit = 2;
  CHECK(run(q) == V{1, 2});
  q.line = "honey-2";
  q.limit = 1;
  CHECK(run(q) == V{2});
  q = {};
  q.line = "no-such-line";
  CHECK(run(q).empty());
  q = {};
  q.since_ms = kT0 + 5000;
  q.until_ms = kT0 + 1000;  // empty window
  CHECK(run(q).empty());
  // The output vector is replaced, not appended to.
  q = {};
  q.limit = 1;
  CHECK(run(q) == V{1});
}

}  // namespace

TEST_CASE("SqliteStore round-trips events with all fields, set and unset", "[store]") {
  TempDir dir;
  const std::string path = dir.File("heft.db");
  const std::vector<EventRow> events = {FullEvent(), BareEvent()};
  {
    auto store = OpenOrFail(path);
    CHECK(store->schema_version() == SqliteStore::kSchemaVersion);
    REQUIRE(store->WriteBatch(events, {}).ok());
  }
  // Reopened, so the values really came from the file.
  auto store = OpenOrFail(path);
  std::vector<EventRow> out;
  REQUIRE(store->QueryEvents({}, &out).ok());
  REQUIRE(out.size() == 2);
  CheckSameEvent(out[0], events[0]);
  CheckSameEvent(out[1], events[1]);
  CHECK_FALSE(out[1].finding.onset.has_value());
  CHECK_FALSE(out[1].finding.size_g.has_value());
  CHECK_FALSE(out[1].finding.head.has_value());
}

TEST_CASE("SqliteStore stores samples with all fields", "[store]") {
  TempDir dir;
  const std::string path = dir.File("heft.db");
  std::vector<SampleRow> samples(3);
  samples[0] = {"oats-1", "tcp:127.0.0.1:41234", 0, kT0 + 94, 500.25, 3, PackStatus::kOk};
  samples[1] = {"oats-1", "tcp:127.0.0.1:41234", 1, kT0 + 594, 498.125,
                kNoHead,  PackStatus::kRejected};
  samples[2] = {"honey-2", "serial:/dev/ttyUSB0", 77, kT0 + 1000, -0.5, 0, PackStatus::kError};
  {
    auto store = OpenOrFail(path);
    REQUIRE(store->WriteBatch({}, samples).ok());
    std::int64_t count = -1;
    REQUIRE(store->CountSamples("oats-1", &count).ok());
    CHECK(count == 2);
    REQUIRE(store->CountSamples("honey-2", &count).ok());
    CHECK(count == 1);
    REQUIRE(store->CountSamples("", &count).ok());
    CHECK(count == 3);
    REQUIRE(store->CountSamples("nope", &count).ok());
    CHECK(count == 0);
  }
  RawDb raw(path);
  sqlite3_stmt* stmt = nullptr;
  REQUIRE(sqlite3_prepare_v2(raw.db(),
                             "SELECT line, source, record_index, time_ms, grams, head, status "
                             "FROM samples ORDER BY rowid",
                             -1, &stmt, nullptr) == SQLITE_OK);
  for (const SampleRow& want : samples) {
    REQUIRE(sqlite3_step(stmt) == SQLITE_ROW);
    CHECK(std::string(reinterpret_cast<const char*>(sqlite3_column_text(stmt, 0))) == want.line);
    CHECK(std::string(reinterpret_cast<const char*>(sqlite3_column_text(stmt, 1))) == want.source);
    CHECK(sqlite3_column_int64(stmt, 2) == want.record_index);
    CHECK(sqlite3_column_int64(stmt, 3) == want.time_ms);
    CHECK(sqlite3_column_double(stmt, 4) == want.grams);
    if (want.head == kNoHead) {
      CHECK(sqlite3_column_type(stmt, 5) == SQLITE_NULL);
    } else {
      CHECK(sqlite3_column_int(stmt, 5) == want.head);
    }
    CHECK(sqlite3_column_int(stmt, 6) == static_cast<int>(want.status));
  }
  CHECK(sqlite3_step(stmt) == SQLITE_DONE);
  sqlite3_finalize(stmt);
}

TEST_CASE("SqliteStore upserts lines", "[store]") {
  TempDir dir;
  const std::string path = dir.File("heft.db");
  auto store = OpenOrFail(path);
  LineRow oats{"oats-1", "rolled oats 500 g", 500.0, 503.0, 12};
  LineRow honey{"honey-2", "honey 340 g", 340.0, std::nullopt, 1};
  REQUIRE(store->UpsertLines({oats, honey}).ok());
  oats.target_g = 502.0;
  REQUIRE(store->UpsertLines({oats}).ok());
  RawDb raw(path);
  CHECK(raw.Int("SELECT count(*) FROM lines") == 2);
  CHECK(raw.Text("SELECT target_g FROM lines WHERE line = 'oats-1'") == "502.0");
  CHECK(raw.Int("SELECT heads FROM lines WHERE line = 'oats-1'") == 12);
  CHECK(raw.Int("SELECT target_g IS NULL FROM lines WHERE line = 'honey-2'") == 1);
  CHECK(raw.Int("SELECT updated_ms > 0 FROM lines WHERE line = 'honey-2'") == 1);
}

TEST_CASE("SqliteStore and MemoryStore filter events alike", "[store]") {
  SECTION("sqlite") {
    TempDir dir;
    auto store = OpenOrFail(dir.File("heft.db"));
    CheckFilters(*store);
  }
  SECTION("memory") {
    MemoryStore store;
    CheckFilters(store);
  }
}

TEST_CASE("SqliteStore: a batch failing part-way stores nothing", "[store]") {
  TempDir dir;
  const std::string path = dir.File("heft.db");
  auto store = OpenOrFail(path);
  std::vector<SampleRow> samples(3);
  for (int i = 0; i < 3; ++i) {
    samples[i] = {"oats-1", "test", i, kT0 + i * 500, 500.0 + i, 1, PackStatus::kOk};
  }
  // The last sample breaks the status CHECK constraint after two events and two
  // samples have already been inserted inside the transaction.
  samples[2].status = static_cast<PackStatus>(7);
  const Status status = store->WriteBatch({FullEvent(), BareEvent()}, samples);
  REQUIRE_FALSE(status.ok());
  INFO(status.message());
  CHECK(status.message().find(path) != std::string::npos);
  CHECK(status.message().find("writing batch: sample 3 of 3") != std::string::npos);
  CHECK(status.message().find("CHECK constraint failed") != std::string::npos);
  CHECK(status.message().find("(code 275)") != std::string::npos);  // SQLITE_CONSTRAINT_CHECK

  std::vector<EventRow> out;
  REQUIRE(store->QueryEvents({}, &out).ok());
  CHECK(out.empty());
  std::int64_t count = -1;
  REQUIRE(store->CountSamples("", &count).ok());
  CHECK(count == 0);

  // The connection is usable afterwards (the transaction was rolled back).
  samples[2].status = PackStatus::kOk;
  REQUIRE(store->WriteBatch({FullEvent()}, samples).ok());
  REQUIRE(store->CountSamples("oats-1", &count).ok());
  CHECK(count == 3);
  REQUIRE(store->QueryEvents({}, &out).ok());
  CHECK(out.size() == 1);
}

TEST_CASE("MemoryStore: injected write failures store nothing", "[store]") {
  MemoryStore store;
  store.FailNextWrites(2, "disk full");
  SampleRow sample{"oats-1", "test", 0, kT0, 500.0, 2, PackStatus::kOk};
  Status status = store.WriteBatch({FullEvent()}, {sample});
  REQUIRE_FALSE(status.ok());
  CHECK(status.message().find("disk full") != std::string::npos);
  CHECK_FALSE(store.UpsertLines({{"oats-1", "oats", 500.0, 503.0, 12}}).ok());
  CHECK(store.events().empty());
  CHECK(store.samples().empty());
  CHECK(store.lines().empty());
  CHECK(store.failed_writes() == 2);
  // Reads never fail and the third write goes through.
  std::vector<EventRow> out;
  CHECK(store.QueryEvents({}, &out).ok());
  REQUIRE(store.WriteBatch({FullEvent()}, {sample}).ok());
  CHECK(store.events().size() == 1);
  CHECK(store.samples().size() == 1);
  CHECK(store.write_calls() == 3);
}

TEST_CASE("SqliteStore migrates a version 1 database to version 2", "[store]") {
  TempDir dir;
  const std::string path = dir.File("heft.db");
  REQUIRE(SqliteStore::CreateAtVersion(path, 1).ok());
  {
    RawDb raw(path);
    CHECK(raw.Int("PRAGMA user_version") == 1);
    CHECK(raw.Int("PRAGMA auto_vacuum") == 2);  // 2 = incremental
    CHECK(raw.Text("PRAGMA journal_mode") == "wal");
    CHECK(raw.Int("SELECT count(*) FROM sqlite_master WHERE name = 'meta'") == 0);
    CHECK(raw.Int("SELECT count(*) FROM sqlite_master WHERE name = 'samples_line_time'") == 1);
    // Rows as a version 1 heft would have written them.
    raw.Exec(
        "INSERT INTO events(transition, kind, severity, line, record_index, at_ms, onset_index, "
        "onset_ms, end_index, size_g, size_sigma, level_g, period_packs, head, detector, message, "
        "source, recorded_ms) VALUES ('raised', 'drift', 'warning', 'oats-1', 900, 1772431200000, "
        "850, 1772431175000, NULL, 1.5, 0.75, 501.5, NULL, NULL, 'ewma', 'drifting up', 'file', "
        "1772431200100)");
    raw.Exec(
        "INSERT INTO samples(line, source, record_index, time_ms, grams, head, status) VALUES "
        "('oats-1', 'file', 900, 1772431200000, 501.5, 4, 0)");
  }
  // Read-only access works on the older schema and leaves it as it is.
  {
    auto reader = OpenOrFail(path, SqliteStore::Mode::kReadOnly);
    CHECK(reader->schema_version() == 1);
    std::vector<EventRow> out;
    EventQuery q;
    q.kind = FindingKind::kDrift;
    q.line = "oats-1";
    REQUIRE(reader->QueryEvents(q, &out).ok());
    REQUIRE(out.size() == 1);
    CHECK(out[0].finding.detector == "ewma");
  }
  {
    RawDb raw(path);
    CHECK(raw.Int("PRAGMA user_version") == 1);
  }
  {
    auto store = OpenOrFail(path);
    CHECK(store->schema_version() == SqliteStore::kSchemaVersion);  // every migration ran
    std::vector<EventRow> out;
    REQUIRE(store->QueryEvents({}, &out).ok());
    REQUIRE(out.size() == 1);
    const Finding& f = out[0].finding;
    CHECK(f.kind == FindingKind::kDrift);
    CHECK(f.at == 900);
    CHECK(f.onset == 850);
    CHECK_FALSE(f.end.has_value());
    CHECK(f.size_g == 1.5);
    CHECK_FALSE(f.head.has_value());
    CHECK(out[0].message == "drifting up");
    std::int64_t count = 0;
    REQUIRE(store->CountSamples("oats-1", &count).ok());
    CHECK(count == 1);
    // New rows go in next to the old ones.
    REQUIRE(store->WriteBatch({FullEvent()}, {}).ok());
    REQUIRE(store->QueryEvents({}, &out).ok());
    CHECK(out.size() == 2);
  }
  RawDb raw(path);
  CHECK(raw.Int("PRAGMA user_version") == SqliteStore::kSchemaVersion);
  CHECK(raw.Int("SELECT count(*) FROM sqlite_master WHERE type = 'index' AND name = "
                "'events_line_at' AND tbl_name = 'events'") == 1);
  CHECK(raw.Int("SELECT count(*) FROM sqlite_master WHERE type = 'index' AND name = "
                "'events_kind' AND tbl_name = 'events'") == 1);
  CHECK(raw.Text("SELECT value FROM meta WHERE key = 'created_by'") == "heft");
  // The planner uses the new index for `heft events --line`.
  const std::string plan =
      raw.Plan("SELECT id FROM events WHERE line = 'x' AND at_ms >= 0 ORDER BY id");
  INFO(plan);
  CHECK(plan.find("events_line_at") != std::string::npos);
}

TEST_CASE("SqliteStore::CreateAtVersion refuses unknown versions", "[store]") {
  TempDir dir;
  CHECK_FALSE(SqliteStore::CreateAtVersion(dir.File("a.db"), 0).ok());
  const Status s = SqliteStore::CreateAtVersion(dir.File("b.db"), SqliteStore::kSchemaVersion + 1);
  REQUIRE_FALSE(s.ok());
  CHECK(s.message().find("no schema version " + std::to_string(SqliteStore::kSchemaVersion + 1)) !=
        std::string::npos);
}

TEST_CASE("SqliteStore refuses a database from a newer heft", "[store]") {
  TempDir dir;
  const std::string path = dir.File("heft.db");
  { OpenOrFail(path); }
  {
    RawDb raw(path);
    raw.Exec("PRAGMA user_version = 99");
  }
  const std::string expected = path + ": database schema version 99 is newer than this heft (" +
                               std::to_string(SqliteStore::kSchemaVersion) + "); upgrade heft";
  for (auto mode : {SqliteStore::Mode::kReadWrite, SqliteStore::Mode::kReadOnly}) {
    std::unique_ptr<SqliteStore> store;
    const Status s = SqliteStore::Open(path, mode, &store);
    REQUIRE_FALSE(s.ok());
    CHECK(s.message() == expected);
    CHECK(store == nullptr);
  }
  RawDb raw(path);
  CHECK(raw.Int("PRAGMA user_version") == 99);  // untouched
}

TEST_CASE("SqliteStore gives clear errors for files that are not heft databases", "[store]") {
  TempDir dir;
  std::unique_ptr<SqliteStore> store;
  SECTION("missing file, read-only") {
    const std::string path = dir.File("missing.db");
    const Status s = SqliteStore::Open(path, SqliteStore::Mode::kReadOnly, &store);
    CHECK(s.message() == "no database at " + path);
    CHECK_FALSE(std::filesystem::exists(path));
  }
  SECTION("a text file") {
    const std::string path = dir.File("notes.db");
    std::ofstream(path) << "time,line,head,weight\n"
                        << std::string(2000, 'x') << "\n";  // longer than a SQLite header
    for (auto mode : {SqliteStore::Mode::kReadWrite, SqliteStore::Mode::kReadOnly}) {
      const Status s = SqliteStore::Open(path, mode, &store);
      REQUIRE_FALSE(s.ok());
      INFO(s.message());
      CHECK(s.message().rfind(path + ": ", 0) == 0);
      CHECK(s.message().find("not a heft database") != std::string::npos);
    }
  }
  SECTION("someone else's SQLite database") {
    const std::string path = dir.File("other.db");
    {
      sqlite3* db = nullptr;
      REQUIRE(sqlite3_open(path.c_str(), &db) == SQLITE_OK);
      REQUIRE(sqlite3_exec(db, "CREATE TABLE recipes(name TEXT)", nullptr, nullptr, nullptr) ==
              SQLITE_OK);
      sqlite3_close(db);
    }
    const Status s = SqliteStore::Open(path, SqliteStore::Mode::kReadWrite, &store);
    REQUIRE_FALSE(s.ok());
    CHECK(s.message().find("not a heft database") != std::string::npos);
  }
  SECTION("an empty SQLite file, read-only") {
    const std::string path = dir.File("empty.db");
    std::ofstream{path};
    const Status s = SqliteStore::Open(path, SqliteStore::Mode::kReadOnly, &store);
    REQUIRE_FALSE(s.ok());
    CHECK(s.message().find("no heft schema") != std::string::npos);
  }
  CHECK(store == nullptr);
}

TEST_CASE("SqliteStore read-only open works while a writer holds a transaction", "[store]") {
  TempDir dir;
  const std::string path = dir.File("heft.db");
  auto writer = OpenOrFail(path);
  REQUIRE(writer->WriteBatch({FullEvent()}, {}).ok());

  RawDb other(path);  // a second writer, like heftd in the middle of a batch
  other.Exec("BEGIN IMMEDIATE");
  other.Exec(
      "INSERT INTO events(transition, kind, severity, line, record_index, at_ms, recorded_ms) "
      "VALUES ('cleared', 'shift', 'info', 'oats-1', 2000, 1772431300000, 1772431300001)");

  const auto start = std::chrono::steady_clock::now();
  auto reader = OpenOrFail(path, SqliteStore::Mode::kReadOnly);
  std::vector<EventRow> out;
  REQUIRE(reader->QueryEvents({}, &out).ok());
  const auto waited = std::chrono::steady_clock::now() - start;
  CHECK(out.size() == 1);                   // only committed rows
  CHECK(waited < std::chrono::seconds(1));  // WAL: no waiting on the writer's lock

  // Writes through a read-only store are refused with a clear message.
  const Status s = reader->WriteBatch({BareEvent()}, {});
  REQUIRE_FALSE(s.ok());
  CHECK(s.message() == path + ": writing batch: database opened read-only");

  other.Exec("COMMIT");
  REQUIRE(reader->QueryEvents({}, &out).ok());
  CHECK(out.size() == 2);
  CHECK(out[1].finding.transition == Transition::kCleared);
}

TEST_CASE("PruneSamples deletes old samples in batches and keeps events", "[store]") {
  TempDir dir;
  const std::string path = dir.File("heft.db");
  auto store = OpenOrFail(path);
  // 12,000 oats-1 samples (one per 500 ms) and 300 honey-2 samples.
  std::vector<SampleRow> samples;
  for (int i = 0; i < 12000; ++i) {
    samples.push_back(
        {"oats-1", "test", i, kT0 + i * 500LL, 500.0 + (i % 7) * 0.1, i % 12, PackStatus::kOk});
  }
  for (int i = 0; i < 300; ++i) {
    samples.push_back({"honey-2", "test", i, kT0 + i * 100LL, 341.0, kNoHead, PackStatus::kOk});
  }
  REQUIRE(store->WriteBatch({FullEvent(), BareEvent()}, samples).ok());
  MemoryStore memory;
  REQUIRE(memory.WriteBatch({FullEvent(), BareEvent()}, samples).ok());

  // Cutoff: oats-1 records 0..10999 are older (three delete batches of at most
  // 5000); honey-2 times run to kT0 + 29,900 ms, all older.
  const std::int64_t cutoff = kT0 + 11000 * 500LL;
  std::int64_t deleted = -1;
  REQUIRE(store->PruneSamples(cutoff, &deleted).ok());
  CHECK(deleted == 11000 + 300);
  std::int64_t count = -1;
  REQUIRE(store->CountSamples("oats-1", &count).ok());
  CHECK(count == 1000);
  REQUIRE(store->CountSamples("honey-2", &count).ok());
  CHECK(count == 0);

  std::int64_t memory_deleted = -1;
  REQUIRE(memory.PruneSamples(cutoff, &memory_deleted).ok());
  CHECK(memory_deleted == deleted);
  REQUIRE(memory.CountSamples("oats-1", &count).ok());
  CHECK(count == 1000);

  std::vector<EventRow> out;
  REQUIRE(store->QueryEvents({}, &out).ok());
  CHECK(out.size() == 2);

  // Nothing more to prune; the freed pages went back to the file system.
  REQUIRE(store->PruneSamples(cutoff, &deleted).ok());
  CHECK(deleted == 0);
  RawDb raw(path);
  CHECK(raw.Int("SELECT min(time_ms) FROM samples") == cutoff);
  CHECK(raw.Int("PRAGMA freelist_count") == 0);
}

}  // namespace heft

namespace heft {
namespace {

LotRow SampleLot(const std::string& line, std::int64_t first_ms, bool with_advice) {
  LotRow row;
  LotReport& lot = row.lot;
  lot.line = line;
  lot.seq = 3;
  lot.lot_id = line + " 2026-03-02T06:00Z";
  lot.boundary = "hour";
  lot.partial = !with_advice;
  lot.opened_ms = first_ms - 500;
  lot.rules_id = "eu-average-quantity";
  lot.nominal_g = 500.0;
  lot.tne_g = 15.0;
  lot.t1_g = 485.0;
  lot.t2_g = with_advice ? std::optional<double>(470.0) : std::nullopt;
  lot.cost_per_kg = 2.4;
  comply::LotFigures& f = lot.figures;
  f.count = 3590;
  f.seen = 3600;
  f.rejected = 4;
  f.gross = 5;
  f.errors = 1;
  f.mean_g = 503.25;
  f.s_g = 1.75;
  f.short_term_sigma_g = 1.5;
  f.min_g = 497.5;
  f.max_g = 509.0;
  f.t1_count = 0;
  f.t2_count = 0;
  f.below_nominal = 160;
  f.rejected_below_t1 = 2;
  f.giveaway_g = 3.25 * 3590;
  f.giveaway_money = f.giveaway_g / 1000.0 * 2.4;
  f.first_time_ms = first_ms;
  f.last_time_ms = first_ms + 3'599'000;
  f.first_index = 7;
  f.last_index = 3606;
  lot.verdicts = {{"mean", "pass", 3.25, "g", "mean 503.250 g vs nominal 500.000 g"},
                  {"t1_share", "pass", 89.0, "packs", "0 below T1"},
                  {"no_t2", "not-evaluated", 0.0, "g", "the table defines no T2 limit"}};
  if (with_advice) {
    SafeTargetAdvice a;
    a.target_g = 500.08;
    a.binding_rule = "mean";
    a.sigma_g = 1.75;
    a.packs_per_hour = 3600.0;
    a.saving_per_pack_g = 3.17;
    a.saving_per_hour_g = 11412.0;
    a.saving_per_year_kg = 22824.0;
    a.saving_per_year_money = 54777.6;
    a.text = "Advice only, with a comma, and \"quotes\".";
    lot.advice = a;
  }
  row.source = "heftd";
  row.recorded_ms = first_ms + 3'600'100;
  return row;
}

void CheckSameLot(const LotRow& a, const LotRow& b) {
  CHECK(a.lot.line == b.lot.line);
  CHECK(a.lot.seq == b.lot.seq);
  CHECK(a.lot.lot_id == b.lot.lot_id);
  CHECK(a.lot.boundary == b.lot.boundary);
  CHECK(a.lot.partial == b.lot.partial);
  CHECK(a.lot.opened_ms == b.lot.opened_ms);
  CHECK(a.lot.rules_id == b.lot.rules_id);
  CHECK(a.lot.nominal_g == b.lot.nominal_g);
  CHECK(a.lot.tne_g == b.lot.tne_g);
  CHECK(a.lot.t1_g == b.lot.t1_g);
  CHECK(a.lot.t2_g == b.lot.t2_g);
  CHECK(a.lot.cost_per_kg == b.lot.cost_per_kg);
  const comply::LotFigures& x = a.lot.figures;
  const comply::LotFigures& y = b.lot.figures;
  CHECK(x.count == y.count);
  CHECK(x.seen == y.seen);
  CHECK(x.rejected == y.rejected);
  CHECK(x.gross == y.gross);
  CHECK(x.errors == y.errors);
  CHECK(x.mean_g == y.mean_g);
  CHECK(x.s_g == y.s_g);
  CHECK(x.short_term_sigma_g == y.short_term_sigma_g);
  CHECK(x.min_g == y.min_g);
  CHECK(x.max_g == y.max_g);
  CHECK(x.t1_count == y.t1_count);
  CHECK(x.t2_count == y.t2_count);
  CHECK(x.below_nominal == y.below_nominal);
  CHECK(x.rejected_below_t1 == y.rejected_below_t1);
  CHECK(x.giveaway_g == y.giveaway_g);
  CHECK(x.giveaway_money == y.giveaway_money);
  CHECK(x.first_time_ms == y.first_time_ms);
  CHECK(x.last_time_ms == y.last_time_ms);
  CHECK(x.first_index == y.first_index);
  CHECK(x.last_index == y.last_index);
  REQUIRE(a.lot.verdicts.size() == b.lot.verdicts.size());
  for (std::size_t i = 0; i < a.lot.verdicts.size(); ++i) {
    CHECK(a.lot.verdicts[i].rule_id == b.lot.verdicts[i].rule_id);
    CHECK(a.lot.verdicts[i].state == b.lot.verdicts[i].state);
    CHECK(a.lot.verdicts[i].margin == b.lot.verdicts[i].margin);
    CHECK(a.lot.verdicts[i].unit == b.lot.verdicts[i].unit);
    CHECK(a.lot.verdicts[i].note == b.lot.verdicts[i].note);
  }
  REQUIRE(a.lot.advice.has_value() == b.lot.advice.has_value());
  if (a.lot.advice) {
    CHECK(a.lot.advice->target_g == b.lot.advice->target_g);
    CHECK(a.lot.advice->binding_rule == b.lot.advice->binding_rule);
    CHECK(a.lot.advice->saving_per_year_kg == b.lot.advice->saving_per_year_kg);
    CHECK(a.lot.advice->saving_per_year_money == b.lot.advice->saving_per_year_money);
    CHECK(a.lot.advice->raise_needed == b.lot.advice->raise_needed);
    CHECK(a.lot.advice->text == b.lot.advice->text);
  }
  CHECK(a.source == b.source);
  CHECK(a.recorded_ms == b.recorded_ms);
}

TEST_CASE("SqliteStore round-trips lots with their verdicts, filters match MemoryStore",
          "[store][lots]") {
  TempDir dir;
  auto store = OpenOrFail(dir.File("heft.db"));
  MemoryStore memory;
  const std::int64_t six = 1772431200000;
  const std::vector<LotRow> rows = {SampleLot("oats-1", six, true),
                                    SampleLot("honey-2", six, false),
                                    SampleLot("oats-1", six + 3'600'000, true)};
  REQUIRE(store->WriteLots(rows).ok());
  REQUIRE(memory.WriteLots(rows).ok());
  std::vector<LotRow> out;
  REQUIRE(store->QueryLots({}, &out).ok());
  REQUIRE(out.size() == 3);
  for (std::size_t i = 0; i < 3; ++i) CheckSameLot(out[i], rows[i]);

  std::vector<LotQuery> queries(4);
  queries[0].line = "oats-1";
  queries[1].since_ms = six + 3'600'000;  // the first hour's lots end at 06:59:59
  queries[2].until_ms = six + 1;
  queries[3].limit = 2;
  const std::vector<std::size_t> expected = {2, 1, 2, 2};
  for (std::size_t q = 0; q < queries.size(); ++q) {
    std::vector<LotRow> a, b;
    REQUIRE(store->QueryLots(queries[q], &a).ok());
    REQUIRE(memory.QueryLots(queries[q], &b).ok());
    CHECK(a.size() == expected[q]);
    REQUIRE(a.size() == b.size());
    for (std::size_t i = 0; i < a.size(); ++i) CheckSameLot(a[i], b[i]);
  }
  // A read-only reader sees them too.
  auto reader = OpenOrFail(dir.File("heft.db"), SqliteStore::Mode::kReadOnly);
  REQUIRE(reader->QueryLots({}, &out).ok());
  CHECK(out.size() == 3);
  CHECK_FALSE(reader->WriteLots(rows).ok());
  // Failed writes in the memory store change nothing.
  memory.FailNextWrites(1, "disk full");
  CHECK_FALSE(memory.WriteLots(rows).ok());
  CHECK(memory.lots().size() == 3);
}

TEST_CASE("SqliteStore migrates a version 2 database to version 3 (lots)", "[store][lots]") {
  TempDir dir;
  const std::string path = dir.File("heft.db");
  REQUIRE(SqliteStore::CreateAtVersion(path, 2).ok());
  {
    RawDb raw(path);
    CHECK(raw.Int("PRAGMA user_version") == 2);
    CHECK(raw.Int("SELECT count(*) FROM sqlite_master WHERE name = 'lots'") == 0);
    raw.Exec(
        "INSERT INTO samples(line, source, record_index, time_ms, grams, head, status) VALUES "
        "('oats-1', 'file', 900, 1772431200000, 501.5, 4, 0)");
  }
  {
    auto store = OpenOrFail(path);
    CHECK(store->schema_version() >= 3);
    std::int64_t count = 0;
    REQUIRE(store->CountSamples("oats-1", &count).ok());
    CHECK(count == 1);
    REQUIRE(store->WriteLots({SampleLot("oats-1", 1772431200000, true)}).ok());
    std::vector<LotRow> out;
    REQUIRE(store->QueryLots({}, &out).ok());
    REQUIRE(out.size() == 1);
    CHECK(out[0].lot.verdicts.size() == 3);
  }
  RawDb raw(path);
  CHECK(raw.Int("PRAGMA user_version") >= 3);
  CHECK(raw.Int("SELECT count(*) FROM lot_verdicts v JOIN lots l ON v.lot = l.id "
                "WHERE l.line = 'oats-1'") == 3);
  const std::string plan =
      raw.Plan("SELECT id FROM lots WHERE line = 'x' AND last_ms >= 0 ORDER BY id");
  INFO(plan);
  CHECK(plan.find("lots_line_last") != std::string::npos);
}

TEST_CASE("SqliteStore migrates a version 4 database to version 5 (line checkpoints)",
          "[store][checkpoint]") {
  TempDir dir;
  const std::string path = dir.File("heft.db");
  REQUIRE(SqliteStore::CreateAtVersion(path, 4).ok());
  {
    RawDb raw(path);
    CHECK(raw.Int("PRAGMA user_version") == 4);
    CHECK(raw.Int("SELECT count(*) FROM sqlite_master WHERE name = 'line_checkpoints'") == 0);
    CHECK(raw.Int("SELECT count(*) FROM sqlite_master WHERE name = 'alarm_state'") == 1);
  }
  {
    // Read-only on the old file: no checkpoints, no error, nothing changed.
    auto reader = OpenOrFail(path, SqliteStore::Mode::kReadOnly);
    std::vector<LineCheckpointRow> rows;
    REQUIRE(reader->LoadLineCheckpoints(&rows).ok());
    CHECK(rows.empty());
  }
  {
    auto store = OpenOrFail(path);
    CHECK(store->schema_version() == SqliteStore::kSchemaVersion);
    // Binary blobs (NUL bytes included) come back byte for byte; a save replaces the set.
    const std::string blob("hLCP\0\x01\xff rest", 12);
    REQUIRE(store
                ->SaveLineCheckpoints(
                    {{"oats-1", 1772431200000, 1, blob}, {"honey-2", 1772431200000, 1, "x"}})
                .ok());
    REQUIRE(store
                ->SaveLineCheckpoints({{"oats-1", 1772431230000, 1, blob},
                                       {"bran-3", 1772431230000, 1, std::string()}})
                .ok());
    std::vector<LineCheckpointRow> rows;
    REQUIRE(store->LoadLineCheckpoints(&rows).ok());
    REQUIRE(rows.size() == 2);
    CHECK(rows[0].line == "bran-3");  // ordered by line id
    CHECK(rows[0].blob.empty());
    CHECK(rows[1].line == "oats-1");
    CHECK(rows[1].saved_ms == 1772431230000);
    CHECK(rows[1].version == 1);
    CHECK(rows[1].blob == blob);
  }
  RawDb raw(path);
  CHECK(raw.Int("PRAGMA user_version") == SqliteStore::kSchemaVersion);
  CHECK(raw.Int("SELECT count(*) FROM line_checkpoints") == 2);
  // The primary key refuses a second row for a line.
  CHECK(raw.Int("SELECT count(*) FROM pragma_index_list('line_checkpoints') WHERE origin = 'pk'") ==
        1);
}

TEST_CASE("SqliteStore migrates a version 5 database to version 6 (sample name ids)", "[store]") {
  TempDir dir;
  const std::string path = dir.File("heft.db");
  REQUIRE(SqliteStore::CreateAtVersion(path, 5).ok());
  {
    // Rows as a version 5 heft wrote them, rowids with a gap (an earlier prune).
    RawDb raw(path);
    raw.Exec(
        "INSERT INTO samples(rowid, line, source, record_index, time_ms, grams, head, status) "
        "VALUES (10, 'oats-1', 'tcp:127.0.0.1:41234', 0, 1772431200000, 500.5, 3, 0), "
        "(11, 'honey-2', 'serial:/dev/ttyUSB0', 0, 1772431200100, 341.25, NULL, 1), "
        "(15, 'oats-1', 'tcp:127.0.0.1:41234', 1, 1772431200600, 499.75, 4, 2)");
  }
  {
    // Read-only on the old file: counts work and nothing changes.
    auto reader = OpenOrFail(path, SqliteStore::Mode::kReadOnly);
    CHECK(reader->schema_version() == 5);
    std::int64_t count = -1;
    REQUIRE(reader->CountSamples("", &count).ok());
    CHECK(count == 3);
  }
  {
    auto store = OpenOrFail(path);
    CHECK(store->schema_version() == 6);
    std::int64_t count = -1;
    REQUIRE(store->CountSamples("", &count).ok());
    CHECK(count == 3);
    REQUIRE(store->CountSamples("oats-1", &count).ok());
    CHECK(count == 2);
    // New rows reuse the migrated names and add new ones.
    REQUIRE(store
                ->WriteBatch({}, {{"oats-1", "tcp:127.0.0.1:41234", 2, 1772431201100, 500.0, 5,
                                   PackStatus::kOk},
                                  {"bran-3", "tcp:127.0.0.1:41300", 0, 1772431201200, 250.0,
                                   kNoHead, PackStatus::kOk}})
                .ok());
    REQUIRE(store->CountSamples("oats-1", &count).ok());
    CHECK(count == 3);
  }
  RawDb raw(path);
  CHECK(raw.Int("PRAGMA user_version") == 6);
  CHECK(raw.Int("SELECT count(*) FROM sample_lines") == 3);
  CHECK(raw.Int("SELECT count(*) FROM sample_sources") == 3);
  CHECK(raw.Int("SELECT count(*) FROM sqlite_master WHERE name = 'samples_line_time'") == 0);
  CHECK(raw.Text("SELECT type FROM sqlite_master WHERE name = 'samples'") == "view");
  // The view gives every row back as version 5 stored it, old rowids kept.
  CHECK(raw.Text("SELECT group_concat(rowid || ' ' || line || ' ' || source || ' ' || "
                 "record_index || ' ' || time_ms || ' ' || grams || ' ' || ifnull(head, '-') || "
                 "' ' || status, '; ') FROM (SELECT * FROM samples ORDER BY rowid)") ==
        "10 oats-1 tcp:127.0.0.1:41234 0 1772431200000 500.5 3 0; "
        "11 honey-2 serial:/dev/ttyUSB0 0 1772431200100 341.25 - 1; "
        "15 oats-1 tcp:127.0.0.1:41234 1 1772431200600 499.75 4 2; "
        "16 oats-1 tcp:127.0.0.1:41234 2 1772431201100 500.0 5 0; "
        "17 bran-3 tcp:127.0.0.1:41300 0 1772431201200 250.0 - 0");
  // A look-up by line name through the view still walks the (line_id, time_ms) index.
  const std::string plan = raw.Plan(
      "SELECT time_ms, grams FROM samples WHERE line = 'oats-1' AND time_ms >= 0 AND "
      "time_ms < 1772431201000 ORDER BY time_ms, rowid");
  INFO(plan);
  CHECK(plan.find("sample_rows_line_time") != std::string::npos);
}

TEST_CASE("MemoryStore keeps line checkpoints like SqliteStore", "[store][checkpoint]") {
  MemoryStore store;
  REQUIRE(store.SaveLineCheckpoints({{"oats-1", 1, 1, "a"}, {"honey-2", 1, 1, "b"}}).ok());
  store.FailNextWrites(1, "disk full");
  CHECK_FALSE(store.SaveLineCheckpoints({}).ok());  // refused: the old set stays
  std::vector<LineCheckpointRow> rows;
  REQUIRE(store.LoadLineCheckpoints(&rows).ok());
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].line == "honey-2");
  CHECK(rows[1].blob == "a");
}

}  // namespace
}  // namespace heft
