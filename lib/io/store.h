// store.h — where heft keeps lines, events and raw samples.
//
// The seam between the daemon/tools and SQLite: SqliteStore is the real one,
// MemoryStore is for tests. A store is used from one thread at a time.
// Writes are batched: one WriteBatch is one transaction.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "core/model/finding.h"
#include "core/model/pack.h"
#include "core/model/status.h"
#include "core/monitor/lot_report.h"

namespace heft {

struct LineRow {
  std::string line;
  std::string product;
  std::optional<double> nominal_g;
  std::optional<double> target_g;
  int heads = 0;
};

struct SampleRow {
  std::string line;
  std::string source;  // which feed it came from, e.g. "tcp:127.0.0.1:41234"
  std::int64_t record_index = 0;
  std::int64_t time_ms = 0;
  double grams = 0.0;
  int head = kNoHead;
  PackStatus status = PackStatus::kOk;
};

struct EventRow {
  Finding finding;
  std::string message;  // the operator message as sent
  std::string source;
  std::int64_t recorded_ms = 0;  // when heft stored it (wall clock of the writer)
};

struct EventQuery {
  std::optional<std::string> line;
  std::optional<FindingKind> kind;
  std::optional<std::int64_t> since_ms;  // events at or after this record time
  std::optional<std::int64_t> until_ms;  // events before this record time
  std::size_t limit = 0;                 // 0 = no limit
};

// A closed lot as stored (tables lots and lot_verdicts).
struct LotRow {
  LotReport lot;
  std::string source;            // who closed it, e.g. "heftd" or "heftd:shutdown"
  std::int64_t recorded_ms = 0;  // when heft stored it (wall clock of the writer)
};

struct LotQuery {
  std::optional<std::string> line;
  std::optional<std::int64_t> since_ms;  // lots whose last pack is at or after this time
  std::optional<std::int64_t> until_ms;  // lots whose first pack is before this time
  std::size_t limit = 0;                 // 0 = no limit
};

// One line's restart checkpoint as stored (table line_checkpoints, v5): the
// blob is io/checkpoint_codec.h's encoding, `version` its format.
struct LineCheckpointRow {
  std::string line;
  std::int64_t saved_ms = 0;  // wall clock when heftd saved it
  std::int64_t version = 0;   // blob format (kLineCheckpointFormat)
  std::string blob;
};

class Store {
 public:
  virtual ~Store() = default;

  virtual Status UpsertLines(const std::vector<LineRow>& lines) = 0;
  // Events and samples in one transaction: all or nothing.
  virtual Status WriteBatch(const std::vector<EventRow>& events,
                            const std::vector<SampleRow>& samples) = 0;
  // Events in the order they were stored.
  virtual Status QueryEvents(const EventQuery& query, std::vector<EventRow>* out) = 0;
  virtual Status CountSamples(const std::string& line, std::int64_t* count) = 0;
  // Deletes raw samples with time before cutoff_ms (retention). Events are kept.
  virtual Status PruneSamples(std::int64_t cutoff_ms, std::int64_t* deleted) = 0;
  // Closed lots with their verdicts in one transaction: all or nothing.
  virtual Status WriteLots(const std::vector<LotRow>& lots) = 0;
  // Lots in the order they were stored, each with its verdicts.
  virtual Status QueryLots(const LotQuery& query, std::vector<LotRow>* out) = 0;
  // Replaces every stored checkpoint with `rows` in one transaction (the set is
  // the whole Plant's state at one moment: all or nothing).
  virtual Status SaveLineCheckpoints(const std::vector<LineCheckpointRow>& rows) = 0;
  // Every stored checkpoint, ordered by line id.
  virtual Status LoadLineCheckpoints(std::vector<LineCheckpointRow>* out) = 0;
};

}  // namespace heft
