// plant.h — the core's front door: routes records to one LineMonitor per line.
//
// Both heftd and `heft replay` drive a Plant, so a replayed feed gives the very
// findings the daemon gave. Pure: time comes in with the records (or through
// AdvanceTo), no I/O, no clocks. Not thread-safe: owned by one ingest strand.
#pragma once

#include <climits>
#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "core/detect/design_cache.h"
#include "core/model/finding.h"
#include "core/monitor/line_checkpoint.h"
#include "core/monitor/line_index.h"
#include "core/monitor/line_settings.h"
#include "core/monitor/lot_report.h"
#include "core/record/record_view.h"

namespace heft {

class LineCompliance;
class LineMonitor;

// A line's state at a glance, for status pages, metrics and checkpoints.
struct LineSnapshot {
  std::string line;
  std::int64_t packs = 0;  // packs accepted (counted on across a restored restart)
  std::int64_t last_time_ms = 0;
  bool settling = true;           // still learning or settling after a start
  double level_g = 0.0;           // rolling mean
  double sigma_g = 0.0;           // rolling short-term sigma
  double baseline_level_g = 0.0;  // in-control level learnt after the start
  double baseline_sigma_g = 0.0;
  int open_findings = 0;  // findings raised and not yet cleared
};

class Plant {
 public:
  explicit Plant(PlantSettings settings);
  ~Plant();
  Plant(const Plant&) = delete;
  Plant& operator=(const Plant&) = delete;

  enum class Accepted { kYes, kTooManyLines };

  // Routes one parsed record. `index` is its 0-based data-record index in its
  // source; `arrival_ms` is used when the record carries no time. Findings are
  // appended to *out.
  Accepted Accept(const RecordView& record, std::int64_t index, std::int64_t arrival_ms,
                  std::vector<Finding>* out);

  // Time has passed with no record (daemon timer). Raises `silence` for lines
  // that have been quiet longer than their gap. `index` is the record index to
  // attach to such findings (the next record's index in the source).
  void AdvanceTo(std::int64_t now_ms, std::int64_t index, std::vector<Finding>* out);

  // Lots closed since the last call (by a lot boundary, CloseLot or
  // CloseAllLots), in the order they closed. Lines with a nominal quantity and
  // a rule table in PlantSettings::rule_tables keep lots (line_compliance.h).
  std::vector<LotReport> TakeClosedLots();
  // Closes every open lot now, e.g. at shutdown or the end of a replay; a lot
  // cut short is marked partial. Drain them with TakeClosedLots().
  void CloseAllLots(bool partial = true);
  // Closes one line's open lot (operator command); false if the line keeps no lots.
  bool CloseLot(std::string_view line, bool partial = false);
  // Why lines that have a nominal keep no lots (e.g. a nominal outside the table).
  const std::vector<std::string>& compliance_problems() const { return compliance_problems_; }

  // What a reload did to one line that already had a monitor.
  struct ReloadNote {
    std::string line;
    bool restarted = false;  // targets changed: settling again, open lot closed (partial)
    std::string what;        // for the log, e.g. "target_g 503 -> 505"
  };
  // Applies reloaded settings (SIGHUP). Lines whose targets changed
  // (nominal_g, target_g, heads or the rule table) start again: a new settling
  // and a new lot (the open one is closed as partial; drain with
  // TakeClosedLots()). Other lines keep their state and the settings they were
  // built with; where their detection settings changed the note says so (they
  // apply after a restart). Lines first seen later use the new settings.
  std::vector<ReloadNote> Reconfigure(PlantSettings settings);

  // Restart checkpoints (line_checkpoint.h; plant_checkpoint.cpp): one per
  // line, in order of first appearance.
  std::vector<LineCheckpoint> SaveCheckpoints() const;
  // What RestoreCheckpoints did with one line's checkpoint.
  struct RestoreNote {
    std::string line;
    bool monitor_restored = false;  // false: the line settles anew at its next pack
    bool lot_continued = false;     // the open lot goes on
    bool lot_closed = false;        // the open lot could not go on: closed as partial
    std::string what;               // why not, for the log; empty when all was restored
  };
  // Into a Plant that has no lines yet (heftd at start, before any source):
  // recreates each line, restores its monitor and open lot where the settings
  // still fit, and queues a lot that cannot continue as partial (drain with
  // TakeClosedLots()). A checkpoint for a line that already exists is skipped.
  std::vector<RestoreNote> RestoreCheckpoints(const std::vector<LineCheckpoint>& checkpoints);

  std::vector<LineSnapshot> Snapshot() const;
  std::size_t line_count() const { return monitors_.size(); }
  const LineSettings& SettingsFor(std::string_view line) const;

 private:
  struct Entry {
    std::unique_ptr<LineMonitor> monitor;
    std::unique_ptr<LineCompliance> compliance;  // null: no lots for this line
    std::int64_t last_arrival_ms = 0;            // arrival clock, for AdvanceTo
  };
  Entry* FindOrCreate(std::string_view line);
  // Builds entry.compliance from the current settings (null when the line keeps no lots).
  void MakeCompliance(Entry& entry, const LineSettings& line_settings);

  PlantSettings settings_;
  DesignCache designs_;                       // shared by the line monitors (declared before them)
  std::vector<Entry> monitors_;               // in order of first appearance
  LineIndex index_;                           // line id → monitors_
  std::int64_t record_clock_ms_ = INT64_MIN;  // latest record time seen
  std::int64_t earliest_silence_deadline_ms_ = INT64_MAX;
  std::vector<LotReport> closed_lots_;
  std::vector<std::string> compliance_problems_;
};

}  // namespace heft
