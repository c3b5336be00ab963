// checkpoint_keeper.h — heftd's restart checkpoints: restores every line's
// state (monitor and open lot) at start, saves it every
// storage.checkpoint_interval_s and at shutdown.
//
// Order matters for what a restart re-raises: a checkpoint is saved only right
// after BatchWriter::Flush() has stored every queued event and lot, so a saved
// "shift open" always has its `raised` row in the events table (after a crash
// the newest checkpoint is at most one interval old: findings of that last
// interval may then be raised or cleared again — at least once, never lost).
// The blobs are written through the daemon's own Store connection on the io
// thread (the BatchWriter's thread has a connection of its own), right after
// the flush, when the writer has nothing left to write.
//
// Not thread-safe: the daemon's io_context thread. All references are
// borrowed and must outlive the keeper.
#pragma once

#include <cstdint>
#include <string_view>

#include "core/model/status.h"
#include "io/store.h"

namespace heft {

class BatchWriter;
class Clock;
class LineEngine;

class CheckpointKeeper {
 public:
  CheckpointKeeper(Store& store, LineEngine& engine, BatchWriter& writer, const Clock& clock);

  // At start, before any source: loads, decodes and restores the checkpoints,
  // logging what each line got. A damaged or unreadable checkpoint is logged
  // and that line starts afresh; only a failing database read is an error.
  Status Restore();

  // Flushes the writer, then saves every line's checkpoint in one transaction.
  // False (logged) when the flush or the save failed; nothing half-saved.
  bool Save(std::string_view why);

  std::int64_t saves() const { return saves_; }

 private:
  Store& store_;
  LineEngine& engine_;
  BatchWriter& writer_;
  const Clock& clock_;
  std::int64_t saves_ = 0;
  bool failing_ = false;  // log a failing spell once, and its end
};

}  // namespace heft
