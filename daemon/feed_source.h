// feed_source.h — what heftd's SourceSet holds: one configured feed source
// (tcp-connect, serial, file-follow, stdin; tcp-listen is IngestServer).
//
// Start() does what can fail at once on a bad setup (e.g. a listener that
// cannot bind) and returns the reason; problems that may pass (a device not
// plugged in yet, a gateway down) are logged and retried instead. Stop()
// finishes the source's ingest (the last records count) and cancels its I/O;
// the cancelled handlers then complete with operation_aborted. Sources live on
// the daemon's single io_context thread; not thread-safe.
#pragma once

#include <string>

#include "core/model/status.h"

namespace heft {

class FeedSource {
 public:
  virtual ~FeedSource() = default;
  virtual Status Start() = 0;
  // Idempotent.
  virtual void Stop() = 0;
  virtual const std::string& name() const = 0;
};

}  // namespace heft
