// stream_ingest.h — one source's bytes in, findings out: framing, parsing,
// record numbering and routing to the Plant.
//
// Shared by heftd (one per connection) and `heft replay` (one per file), so
// both number records the same way: 0-based data-record indexes; the native
// header line and blank lines take no index; a malformed or over-long record
// takes its index and is reported, then skipped. Pure: bytes and the arrival
// time come in as arguments. Not thread-safe; one per stream.
//
// `plant` and `listener` are borrowed and must outlive this object.
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "core/model/finding.h"
#include "core/model/pack.h"
#include "core/monitor/plant.h"
#include "core/record/line_framer.h"
#include "core/record/native_record.h"
#include "core/record/record_format.h"

namespace heft {

struct RecordProblem {
  std::int64_t index = 0;      // record index the bad record took
  RecordError error = RecordError::kNone;
  int field = -1;              // 0-based field, -1 when not about one field
  std::size_t length = 0;      // bytes in the record
  std::string excerpt;         // first bytes, control bytes shown as \xHH
  std::string_view field_name; // field name for configured formats (static), or ""
};

struct IngestCounters {
  std::int64_t records = 0;    // data records seen (== next index)
  std::int64_t accepted = 0;
  std::int64_t malformed = 0;  // includes over-long
  std::int64_t refused = 0;    // well-formed but refused (too many lines)
};

// Told about every accepted pack and every bad record. Calls happen inside Feed().
class IngestListener {
 public:
  virtual ~IngestListener() = default;
  virtual void OnPack(std::string_view line, const Pack& pack) = 0;
  virtual void OnProblem(const RecordProblem& problem) = 0;
};

class StreamIngest {
 public:
  StreamIngest(Plant& plant, IngestListener& listener,
               std::size_t max_record = LineFramer::kDefaultMaxRecord);

  // Processes a chunk; findings are appended to *out.
  void Feed(std::string_view bytes, std::int64_t arrival_ms, std::vector<Finding>* out);
  // End of stream: an unterminated last record is processed too.
  void Finish(std::int64_t arrival_ms, std::vector<Finding>* out);

  // Reads records with `format` (a source's descriptor) instead of the native
  // CSV, framed at most `max_record` bytes. REQUIRES: before the first Feed.
  void SetFormat(std::unique_ptr<RecordFormat> format, std::size_t max_record);
  // The source goes on in a new stream (reconnect, rotated or truncated
  // file): an unterminated record is dropped, counted as malformed
  // (`truncated`, it takes its index); the next record may be a header again.
  // Record numbering continues.
  void Restart();

  const IngestCounters& counters() const { return counters_; }

 private:
  void OnRecord(std::string_view text, std::int64_t arrival_ms, std::vector<Finding>* out);
  void OnTooLong(std::size_t bytes);

  Plant& plant_;
  IngestListener& listener_;
  LineFramer framer_;
  std::unique_ptr<RecordFormat> format_;  // null: native CSV (the fast default)
  IngestCounters counters_;
  bool header_allowed_ = true;  // only the first record may be the header
};

}  // namespace heft
