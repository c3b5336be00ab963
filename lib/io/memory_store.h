// memory_store.h — an in-memory Store for tests of the daemon and tools.
//
// Same semantics as SqliteStore (filters, ordering, all-or-nothing batches)
// without a file. FailNextWrites() injects write failures so callers' error
// paths can be tested. Not thread-safe: one thread at a time, like any Store.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "io/store.h"

namespace heft {

class MemoryStore : public Store {
 public:
  Status UpsertLines(const std::vector<LineRow>& lines) override;
  Status WriteBatch(const std::vector<EventRow>& events,
                    const std::vector<SampleRow>& samples) override;
  Status QueryEvents(const EventQuery& query, std::vector<EventRow>* out) override;
  // An empty `line` counts the samples of all lines.
  Status CountSamples(const std::string& line, std::int64_t* count) override;
  Status PruneSamples(std::int64_t cutoff_ms, std::int64_t* deleted) override;
  Status WriteLots(const std::vector<LotRow>& lots) override;
  Status QueryLots(const LotQuery& query, std::vector<LotRow>* out) override;
  Status SaveLineCheckpoints(const std::vector<LineCheckpointRow>& rows) override;
  Status LoadLineCheckpoints(std::vector<LineCheckpointRow>* out) override;

  // The next `count` write calls (UpsertLines, WriteBatch, PruneSamples, WriteLots,
  // SaveLineCheckpoints) fail
  // with `reason` and change nothing. Reads are unaffected.
  void FailNextWrites(int count, std::string reason);

  // What has been stored, for assertions.
  const std::vector<LineRow>& lines() const { return lines_; }
  const std::vector<EventRow>& events() const { return events_; }
  const std::vector<SampleRow>& samples() const { return samples_; }
  const std::vector<LotRow>& lots() const { return lots_; }
  // Write calls attempted / refused by FailNextWrites.
  int write_calls() const { return write_calls_; }
  int failed_writes() const { return failed_writes_; }

 private:
  // Counts the call; returns the injected failure if one is pending.
  Status CheckFault();

  std::vector<LineRow> lines_;
  std::vector<EventRow> events_;
  std::vector<SampleRow> samples_;
  std::vector<LotRow> lots_;
  std::vector<LineCheckpointRow> checkpoints_;
  int fail_remaining_ = 0;
  std::string fail_reason_;
  int write_calls_ = 0;
  int failed_writes_ = 0;
};

}  // namespace heft
