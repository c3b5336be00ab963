// source_set.h — every feed source of the config's `sources:` list, built,
// started and stopped together (the `listen:` block stays the Daemon's own
// IngestServer).
//
// Start() compiles each source's record format once (MakeRecordFormat) and
// builds one object per source: IngestServer for tcp-listen (each connection
// gets a clone of the format), TcpConnectSource, SerialSource,
// FileFollowSource, StdinSource. An error names the source and stops the
// start-up; Stop() stops them all (each finishes its ingest). Not
// thread-safe: io_context thread only. `io` and `engine` are borrowed.
#pragma once

#include <memory>
#include <vector>

#include <boost/asio/io_context.hpp>

#include "core/model/status.h"
#include "feed_source.h"
#include "io/source_settings.h"

namespace heft {

class IngestServer;
class LineEngine;

class SourceSet {
 public:
  SourceSet(boost::asio::io_context& io, LineEngine& engine);
  ~SourceSet();
  SourceSet(const SourceSet&) = delete;
  SourceSet& operator=(const SourceSet&) = delete;

  Status Start(const std::vector<SourceSettings>& sources);
  // Idempotent.
  void Stop();

 private:
  boost::asio::io_context& io_;
  LineEngine& engine_;
  std::vector<std::unique_ptr<IngestServer>> listeners_;
  std::vector<std::unique_ptr<FeedSource>> sources_;
  bool stopped_ = false;
};

}  // namespace heft
