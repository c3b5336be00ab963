// stdin_source.h — a `stdin` source: records piped into heftd
// (`device-tool | heftd --config ...`), for pipes and tests.
//
// A pipe, socket or terminal is read asynchronously (posix::stream_descriptor
// on a duplicate of fd 0). A regular file redirected to stdin cannot be
// polled by epoll, so it is read in chunks posted to the io_context one after
// another (other work runs between them). At end of input the ingest is
// finished (an unterminated last record counts) and a summary is logged; the
// daemon keeps running. Not thread-safe: io_context thread only.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include <boost/asio/io_context.hpp>
#include <boost/asio/posix/stream_descriptor.hpp>

#include "core/record/record_format.h"
#include "feed_source.h"
#include "ingest_source.h"
#include "io/source_settings.h"

namespace heft {

class LineEngine;

class StdinSource final : public FeedSource {
 public:
  StdinSource(boost::asio::io_context& io, LineEngine& engine, SourceSettings settings,
              std::unique_ptr<RecordFormat> format);
  ~StdinSource() override;

  Status Start() override;
  void Stop() override;
  const std::string& name() const override { return settings_.name; }

 private:
  void DoRead();         // pipe / socket / terminal
  void ReadFileChunk();  // regular file
  void End(const std::string& why);

  boost::asio::io_context& io_;
  SourceSettings settings_;
  boost::asio::posix::stream_descriptor stream_;
  std::unique_ptr<IngestSource> ingest_;
  std::vector<char> buffer_;
  int file_fd_ = -1;  // a duplicate of fd 0 when it is a regular file
  bool ended_ = false;
};

}  // namespace heft
