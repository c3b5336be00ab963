#include "checkpoint_keeper.h"

#include <chrono>
#include <vector>

#include <spdlog/spdlog.h>

#include "batch_writer.h"
#include "clock.h"
#include "io/checkpoint_codec.h"
#include "line_engine.h"

namespace heft {

CheckpointKeeper::CheckpointKeeper(Store& store, LineEngine& engine, BatchWriter& writer,
                                   const Clock& clock)
    : store_(store), engine_(engine), writer_(writer), clock_(clock) {}

Status CheckpointKeeper::Restore() {
  std::vector<LineCheckpointRow> rows;
  if (Status s = store_.LoadLineCheckpoints(&rows); !s.ok()) {
    return Status::Error("cannot read line checkpoints: " + s.message());
  }
  std::vector<LineCheckpoint> checkpoints;
  for (const LineCheckpointRow& row : rows) {
    LineCheckpoint c;
    const Status s = DecodeLineCheckpoint(row.blob, &c);
    if (!s.ok() || c.line != row.line) {
      spdlog::warn(
          "restart: line {}: checkpoint saved at {} ms not used ({}); the line starts "
          "afresh",
          row.line, row.saved_ms, s.ok() ? "its blob names another line" : s.message());
      continue;
    }
    spdlog::info("restart: line {}: checkpoint from {} s ago", row.line,
                 (clock_.NowMs() - row.saved_ms) / 1000);
    checkpoints.push_back(std::move(c));
  }
  engine_.RestoreCheckpoints(checkpoints);
  return Status::Ok();
}

bool CheckpointKeeper::Save(std::string_view why) {
  const auto started = std::chrono::steady_clock::now();
  // Events and lots first: a checkpoint never gets ahead of the stored rows.
  if (!writer_.Flush()) {
    if (!failing_) spdlog::warn("checkpoint ({}): not saved, queued rows could not be stored", why);
    failing_ = true;
    return false;
  }
  std::vector<LineCheckpointRow> rows;
  std::size_t bytes = 0;
  const std::int64_t now = clock_.NowMs();
  for (const LineCheckpoint& c : engine_.SaveCheckpoints()) {
    LineCheckpointRow row;
    row.line = c.line;
    row.saved_ms = now;
    row.version = kLineCheckpointFormat;
    row.blob = EncodeLineCheckpoint(c);
    bytes += row.blob.size();
    rows.push_back(std::move(row));
  }
  if (const Status s = store_.SaveLineCheckpoints(rows); !s.ok()) {
    if (!failing_) spdlog::warn("checkpoint ({}): not saved: {}", why, s.message());
    failing_ = true;
    return false;
  }
  if (failing_) spdlog::info("checkpoint ({}): saving again", why);
  failing_ = false;
  ++saves_;
  const auto took = std::chrono::duration_cast<std::chrono::microseconds>(
      std::chrono::steady_clock::now() - started);
  spdlog::debug("checkpoint ({}): {} lines, {} bytes in {} us", why, rows.size(), bytes,
                took.count());
  return true;
}

}  // namespace heft
