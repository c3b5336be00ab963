// history_queries.h — read-only queries over a heft database for the engineer's
// history: packs of a line in a time range, events, configured lines and their
// latest state, and the line's net-content limits from a rule table.
//
// Opens its own read-only connections (the Store's for events, a raw one for
// samples and lines), so it is safe while heftd writes (WAL: readers do not
// block the writer and see a consistent snapshot per query). Opening fails
// with a clear message for a missing file, a non-heft file or a schema newer
// than this heft. Used by `heft summary|export|lines|report` and heftd's HTTP
// API (on its own worker thread). Not thread-safe: one thread per reader.
#pragma once

#include <cstdint>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "core/comply/net_content_limits.h"
#include "core/model/status.h"
#include "core/monitor/lot_report.h"
#include "core/report/history_sample.h"
#include "io/store.h"

namespace heft {

struct SampleRange {
  std::string line;
  std::optional<std::int64_t> from_ms;  // inclusive
  std::optional<std::int64_t> to_ms;    // exclusive
  std::size_t last = 0;                 // > 0: only the newest `last` packs (still oldest first)
};

struct LineState {
  HistoryLine line;
  bool configured = false;  // in the lines table (else only seen in samples/events)
  std::int64_t packs = 0;   // stored packs
  std::optional<std::int64_t> last_pack_ms;
  std::vector<std::string> open_events;  // kinds raised without a later clear
};

class HistoryReader {
 public:
  static Status Open(const std::string& path, std::unique_ptr<HistoryReader>* out);
  ~HistoryReader();
  HistoryReader(const HistoryReader&) = delete;
  HistoryReader& operator=(const HistoryReader&) = delete;

  int schema_version() const;
  const std::string& path() const;

  Status Lines(std::vector<HistoryLine>* out);
  // A configured line's row; empty when the line is not in the lines table.
  Status Line(const std::string& line, std::optional<HistoryLine>* out);
  Status Samples(const SampleRange& range, std::vector<HistorySample>* out);
  Status Events(const EventQuery& query, std::vector<HistoryEvent>* out);
  Status LineStates(std::vector<LineState>* out);
  // Kinds raised without a later clear, per line (reads only the events table).
  Status OpenEvents(std::map<std::string, std::vector<std::string>>* out);
  // True when the database has a lots table (schema 3 and later).
  bool HasLots() const;
  // Lots of `line` (all lines when empty) overlapping [from, to), in the order stored.
  Status Lots(const std::string& line, std::optional<std::int64_t> from_ms,
              std::optional<std::int64_t> to_ms, std::vector<LotReport>* out);

 private:
  struct Impl;
  explicit HistoryReader(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

// Limits for `nominal_g` from the rule table at `rules_path`. When they cannot
// be had (no nominal, table unreadable, nominal outside the table) *out stays
// empty and *note says why; that is not an error for a report.
void LoadLimitsForLine(const std::string& rules_path, std::optional<double> nominal_g,
                       std::optional<comply::NetContentLimits>* out, std::string* rules_name,
                       std::string* note);

}  // namespace heft
