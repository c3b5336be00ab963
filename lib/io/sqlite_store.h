// sqlite_store.h — the SQLite implementation of Store (embedded, one file).
//
// Schema versioned with PRAGMA user_version and forward migrations (see
// DEVELOPERS.md). WAL, synchronous=NORMAL, prepared statements. Opening a
// database written by a newer heft fails with a clear message.
#pragma once

#include <memory>
#include <string>

#include "io/store.h"

namespace heft {

class SqliteStore : public Store {
 public:
  static constexpr int kSchemaVersion = 6;
  // From this version raw samples live in sample_rows (names by id); `samples`
  // is a view over it. Readers of older files keep to the `samples` table.
  static constexpr int kSampleRowsVersion = 6;

  enum class Mode { kReadWrite, kReadOnly };

  // Opens (creating and migrating when read-write) the database at `path`.
  static Status Open(const std::string& path, Mode mode, std::unique_ptr<SqliteStore>* out);

  // For tests of migrations: creates a database at schema `version` only.
  static Status CreateAtVersion(const std::string& path, int version);

  ~SqliteStore() override;

  Status UpsertLines(const std::vector<LineRow>& lines) override;
  Status WriteBatch(const std::vector<EventRow>& events,
                    const std::vector<SampleRow>& samples) override;
  Status QueryEvents(const EventQuery& query, std::vector<EventRow>* out) override;
  Status CountSamples(const std::string& line, std::int64_t* count) override;
  Status PruneSamples(std::int64_t cutoff_ms, std::int64_t* deleted) override;
  Status WriteLots(const std::vector<LotRow>& lots) override;
  Status QueryLots(const LotQuery& query, std::vector<LotRow>* out) override;
  Status SaveLineCheckpoints(const std::vector<LineCheckpointRow>& rows) override;
  Status LoadLineCheckpoints(std::vector<LineCheckpointRow>* out) override;

  int schema_version() const;

 private:
  struct Impl;
  explicit SqliteStore(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace heft
