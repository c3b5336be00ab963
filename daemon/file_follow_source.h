// file_follow_source.h — a `file-follow` source: reads a file another program
// keeps appending to (an export), like `tail -F`.
//
// Every poll_ms a steady_timer fires: read what was appended, then look at
// the path again:
//   * a different file there (inode or device changed: rotated by rename and
//     re-create) → finish reading the old file to its end, then open the new
//     one from its beginning;
//   * our file shorter than what we read (truncated in place) → start again
//     from offset 0;
//   * no file there (between rename and re-create) → keep the old one open
//     and look again next time.
// On a switch or truncation an unterminated last record is counted as
// `truncated` (StreamIngest::Restart) and the next record may be a header
// again. Record indexes run on across files. start_at `end` (the default)
// skips what the file holds when heftd starts, so a restart does not read
// old records twice; `beginning` reads them. Regular files never block, so
// reads are plain read(2) calls on the io_context thread, at most
// kMaxBytesPerPoll per poll. Not thread-safe.
#pragma once

#include <sys/types.h>

#include <chrono>
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include <boost/asio/io_context.hpp>
#include <boost/asio/steady_timer.hpp>

#include "core/record/record_format.h"
#include "feed_source.h"
#include "ingest_source.h"
#include "io/source_settings.h"

namespace heft {

class LineEngine;

class FileFollowSource final : public FeedSource {
 public:
  static constexpr std::size_t kMaxBytesPerPoll = 8 * 1024 * 1024;

  FileFollowSource(boost::asio::io_context& io, LineEngine& engine, SourceSettings settings,
                   std::unique_ptr<RecordFormat> format);
  ~FileFollowSource() override;

  Status Start() override;
  void Stop() override;
  const std::string& name() const override { return settings_.name; }

 private:
  void ArmTimer();
  void Poll();
  // Opens settings_.path; true if open. `from_end`: skip existing content.
  bool OpenFile(bool from_end);
  void CloseFile();
  // Reads what is there now (up to the per-poll bound); false on read error.
  bool ReadAvailable();

  SourceSettings settings_;
  boost::asio::steady_timer timer_;
  std::unique_ptr<IngestSource> ingest_;
  std::vector<char> buffer_;
  int fd_ = -1;
  dev_t device_ = 0;
  ino_t inode_ = 0;
  std::int64_t offset_ = 0;  // bytes of the current file read so far
  bool stopped_ = false;
  bool waiting_logged_ = false;  // "waiting for FILE" once until it appears
  std::chrono::steady_clock::time_point next_due_;
};

}  // namespace heft
