// ingest_source.h — one feed source inside the daemon: its StreamIngest, its
// counters and its rate-limited report of bad records.
//
// Created by LineEngine::OpenSource for each connection and owned by the
// FeedSession. It is the IngestListener of its StreamIngest, so every pack and
// problem is known together with the source it came from; packs and findings
// are handed on to the engine. Malformed records are logged with source,
// record index, reason and excerpt, at most kProblemLinesPerWindow lines per
// kProblemWindowMs per source; the rest are counted and summarised.
//
// Not thread-safe: io_context thread only. `engine` and `clock` are borrowed
// and must outlive this object.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "core/model/finding.h"
#include "core/monitor/stream_ingest.h"
#include "core/record/record_format.h"

namespace heft {

class Clock;
class LineEngine;

class IngestSource final : public IngestListener {
 public:
  static constexpr int kProblemLinesPerWindow = 5;
  static constexpr std::int64_t kProblemWindowMs = 10'000;

  IngestSource(LineEngine& engine, std::string name, const Clock& clock);
  IngestSource(const IngestSource&) = delete;
  IngestSource& operator=(const IngestSource&) = delete;

  // Bytes as they arrived (any split). REQUIRES: not finished.
  void Feed(std::string_view bytes);
  // End of stream: the unterminated last record counts too. Idempotent.
  void Finish();
  // Reads the source's configured format instead of native CSV, framed at
  // `max_record` bytes. REQUIRES: before the first Feed.
  void UseFormat(std::unique_ptr<RecordFormat> format, std::size_t max_record);
  // The stream was cut and goes on anew (reconnect, rotated file): an
  // unterminated record is dropped and counted (StreamIngest::Restart).
  void Restart();

  const std::string& name() const { return name_; }
  const IngestCounters& counters() const { return ingest_.counters(); }
  bool finished() const { return finished_; }

  // IngestListener (called from inside Feed/Finish).
  void OnPack(std::string_view line, const Pack& pack) override;
  void OnProblem(const RecordProblem& problem) override;

 private:
  void AfterIngest(const IngestCounters& before);
  void ReportSuppressed();

  LineEngine& engine_;
  const std::string name_;
  const Clock& clock_;
  StreamIngest ingest_;
  std::vector<Finding> findings_;  // reused for each chunk
  bool finished_ = false;
  bool refusal_logged_ = false;
  // Rate limit for problem lines.
  std::int64_t window_start_ms_ = 0;
  int shown_in_window_ = 0;
  std::int64_t suppressed_in_window_ = 0;
};

}  // namespace heft
