// store_samples_test.cpp — SqliteStore's raw-sample writes in bulk: rows go
// 64 to an INSERT statement (the rest one by one), so batches longer than
// that must keep every row, its fields and its order, and a bad row inside a
// 64-row statement must still leave nothing of the batch behind.
#include <sqlite3.h>

#include <atomic>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include <unistd.h>
#include <catch2/catch.hpp>

#include "io/sqlite_store.h"

namespace heft {
namespace {

namespace fs = std::filesystem;

constexpr std::int64_t kT0 = 1772431200000;  // 2026-03-02T06:00:00Z

class TempDb {
 public:
  TempDb() {
    static std::atomic<int> counter{0};
    dir_ = fs::temp_directory_path() / ("heft-store-samples-test-" + std::to_string(::getpid()) +
                                        "-" + std::to_string(counter++));
    fs::remove_all(dir_);
    fs::create_directories(dir_);
  }
  ~TempDb() {
    std::error_code ec;
    fs::remove_all(dir_, ec);
  }
  TempDb(const TempDb&) = delete;
  TempDb& operator=(const TempDb&) = delete;
  std::string path() const { return (dir_ / "heft.db").string(); }

 private:
  fs::path dir_;
};

// Every field varies with the index, heads include "none" and statuses all three.
std::vector<SampleRow> MakeSamples(int count) {
  std::vector<SampleRow> out;
  for (int i = 0; i < count; ++i) {
    SampleRow r;
    r.line = i % 3 == 0 ? "oats-1" : "honey-2";
    r.source = i % 2 == 0 ? "tcp:127.0.0.1:41234" : "serial:/dev/ttyUSB0";
    r.record_index = 1000 + i;
    r.time_ms = kT0 + 250 * i;
    r.grams = 500.0 + 0.125 * i;
    r.head = i % 5 == 0 ? kNoHead : i % 12;
    r.status = static_cast<PackStatus>(i % 3);
    out.push_back(r);
  }
  return out;
}

std::vector<SampleRow> ReadSamples(const std::string& path) {
  sqlite3* db = nullptr;
  REQUIRE(sqlite3_open_v2(path.c_str(), &db, SQLITE_OPEN_READONLY, nullptr) == SQLITE_OK);
  sqlite3_stmt* stmt = nullptr;
  REQUIRE(sqlite3_prepare_v2(db,
                             "SELECT line, source, record_index, time_ms, grams, head, status "
                             "FROM samples ORDER BY rowid",
                             -1, &stmt, nullptr) == SQLITE_OK);
  std::vector<SampleRow> out;
  while (sqlite3_step(stmt) == SQLITE_ROW) {
    SampleRow r;
    r.line = reinterpret_cast<const char*>(sqlite3_column_text(stmt, 0));
    r.source = reinterpret_cast<const char*>(sqlite3_column_text(stmt, 1));
    r.record_index = sqlite3_column_int64(stmt, 2);
    r.time_ms = sqlite3_column_int64(stmt, 3);
    r.grams = sqlite3_column_double(stmt, 4);
    r.head = sqlite3_column_type(stmt, 5) == SQLITE_NULL ? kNoHead : sqlite3_column_int(stmt, 5);
    r.status = static_cast<PackStatus>(sqlite3_column_int(stmt, 6));
    out.push_back(r);
  }
  sqlite3_finalize(stmt);
  sqlite3_close(db);
  return out;
}

void CheckSame(const std::vector<SampleRow>& got, const std::vector<SampleRow>& want) {
  REQUIRE(got.size() == want.size());
  for (std::size_t i = 0; i < want.size(); ++i) {
    INFO("sample " << i);
    CHECK(got[i].line == want[i].line);
    CHECK(got[i].source == want[i].source);
    CHECK(got[i].record_index == want[i].record_index);
    CHECK(got[i].time_ms == want[i].time_ms);
    CHECK(got[i].grams == want[i].grams);
    CHECK(got[i].head == want[i].head);
    CHECK(got[i].status == want[i].status);
  }
}

}  // namespace

TEST_CASE("SqliteStore writes long sample batches whole and in order", "[store]") {
  TempDb temp;
  const std::vector<SampleRow> samples = MakeSamples(3 * 64 + 5);  // three full statements + 5
  {
    std::unique_ptr<SqliteStore> store;
    REQUIRE(SqliteStore::Open(temp.path(), SqliteStore::Mode::kReadWrite, &store).ok());
    // Twice: the cached statements are reused with fresh bindings.
    REQUIRE(
        store->WriteBatch({}, std::vector<SampleRow>(samples.begin(), samples.begin() + 70)).ok());
    REQUIRE(
        store->WriteBatch({}, std::vector<SampleRow>(samples.begin() + 70, samples.end())).ok());
    std::int64_t count = -1;
    REQUIRE(store->CountSamples("", &count).ok());
    CHECK(count == static_cast<std::int64_t>(samples.size()));
  }
  CheckSame(ReadSamples(temp.path()), samples);
}

TEST_CASE("SqliteStore: a bad sample inside a 64-row statement stores nothing", "[store]") {
  TempDb temp;
  std::vector<SampleRow> samples = MakeSamples(200);
  samples[99].status = static_cast<PackStatus>(7);  // breaks the status CHECK constraint
  std::unique_ptr<SqliteStore> store;
  REQUIRE(SqliteStore::Open(temp.path(), SqliteStore::Mode::kReadWrite, &store).ok());
  const Status status = store->WriteBatch({}, samples);
  REQUIRE_FALSE(status.ok());
  INFO(status.message());
  CHECK(status.message().find("writing batch: samples 65-128 of 200") != std::string::npos);
  CHECK(status.message().find("CHECK constraint failed") != std::string::npos);
  std::int64_t count = -1;
  REQUIRE(store->CountSamples("", &count).ok());
  CHECK(count == 0);

  samples[99].status = PackStatus::kOk;
  REQUIRE(store->WriteBatch({}, samples).ok());
  store.reset();
  CheckSame(ReadSamples(temp.path()), samples);
}

}  // namespace heft
