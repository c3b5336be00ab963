// line_engine.h — the daemon's monitoring core: owns the Plant and turns what
// it finds into operator alerts and stored rows.
//
// Every feed source (one IngestSource per TCP connection) routes its records
// into this one Plant, so a line's statistics do not depend on which
// connection its packs came over. For each finding the engine builds the
// operator message, logs it (`ALERT <message>` at warn for raised,
// `CLEAR <message>` at info for cleared: tools/demo greps these prefixes) and
// queues an EventRow; accepted packs become SampleRows when raw samples are
// kept. The housekeeping tick calls AdvanceClock() so quiet lines raise
// `silence` without waiting for their next record.
//
// Not thread-safe: lives on the daemon's single io_context thread. `writer`
// and `clock` are borrowed and must outlive the engine and its sources.
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "core/model/finding.h"
#include "core/model/pack.h"
#include "core/monitor/line_settings.h"
#include "core/monitor/plant.h"
#include "core/monitor/stream_ingest.h"

namespace heft {

class BatchWriter;
class Clock;
class IngestSource;

class LineEngine {
 public:
  // Totals over every source since start.
  struct Totals {
    std::int64_t records = 0;  // data records seen (good or bad)
    std::int64_t accepted = 0;
    std::int64_t malformed = 0;
    std::int64_t refused = 0;  // well-formed but refused: too many lines
    std::int64_t raised = 0;
    std::int64_t cleared = 0;
  };

  LineEngine(PlantSettings settings, BatchWriter& writer, const Clock& clock, bool keep_samples);
  ~LineEngine();
  LineEngine(const LineEngine&) = delete;
  LineEngine& operator=(const LineEngine&) = delete;

  // A new feed source named e.g. "tcp:127.0.0.1:41234". The source borrows
  // this engine, which must outlive it.
  std::unique_ptr<IngestSource> OpenSource(std::string name);

  // Housekeeping: tells the Plant the wall-clock time so lines whose last
  // record *arrived* longer ago than their silence gap raise `silence` without
  // waiting for another record. (Plant compares with arrival times, not record
  // times, so replayed or skewed device clocks do not look silent.) Such
  // findings carry Totals::records as their record index: the engine's count
  // of records seen so far over all sources. For a single source that is the
  // index its next record will take, which is what `heft replay` attaches.
  void AdvanceClock();

  // Shutdown without a checkpoint: closes every open lot (marked partial) and queues it.
  void CloseAllLots();

  // Restart checkpoints (core/monitor/line_checkpoint.h; checkpoint_keeper.h).
  // Restore: at start, before any source; logs what each line got back and
  // queues the lots that could not continue (closed as partial).
  void RestoreCheckpoints(const std::vector<LineCheckpoint>& checkpoints);
  std::vector<LineCheckpoint> SaveCheckpoints() const { return plant_.SaveCheckpoints(); }

  // SIGHUP with a valid new config: Plant::Reconfigure, logs what happened
  // to each line and queues the lots it closed.
  void Reconfigure(PlantSettings settings);

  // Called with each non-empty batch of findings, after they are logged and
  // queued (heftd's AlarmService). Same thread.
  void SetFindingsListener(std::function<void(const std::vector<Finding>&)> listener) {
    findings_listener_ = std::move(listener);
  }

  const Totals& totals() const { return totals_; }
  const Plant& plant() const { return plant_; }

  // --- Called by IngestSource (same thread). ---
  Plant& mutable_plant() { return plant_; }
  void OnPack(const std::string& source, std::string_view line, const Pack& pack);
  void OnFindings(const std::string& source, const std::vector<Finding>& findings);
  void OnCounters(const IngestCounters& before, const IngestCounters& after);

 private:
  // Logs the lots the Plant closed (`LOT ...` at info) and queues them.
  void QueueClosedLots(const std::string& source);

  Plant plant_;
  BatchWriter& writer_;
  const Clock& clock_;
  const bool keep_samples_;
  Totals totals_;
  std::vector<Finding> tick_findings_;  // reused by AdvanceClock
  std::function<void(const std::vector<Finding>&)> findings_listener_;
};

}  // namespace heft
