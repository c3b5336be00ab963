// plant_checkpoint.cpp — Plant::SaveCheckpoints / RestoreCheckpoints: every
// line's monitor and open lot, kept apart from the routing path in plant.cpp.
#include <algorithm>

#include "core/monitor/line_compliance.h"
#include "core/monitor/line_monitor.h"
#include "core/monitor/plant.h"

namespace heft {

std::vector<LineCheckpoint> Plant::SaveCheckpoints() const {
  std::vector<LineCheckpoint> checkpoints;
  checkpoints.reserve(monitors_.size());
  for (std::size_t i = 0; i < monitors_.size(); ++i) {
    const Entry& entry = monitors_[i];
    LineCheckpoint c;
    c.line = entry.monitor->line();
    c.position = static_cast<std::int64_t>(i);
    c.last_arrival_ms = entry.last_arrival_ms;
    c.record_clock_ms = record_clock_ms_;
    c.monitor = entry.monitor->SaveCheckpoint();
    if (entry.compliance) c.compliance = entry.compliance->SaveCheckpoint();
    checkpoints.push_back(std::move(c));
  }
  return checkpoints;
}

std::vector<Plant::RestoreNote> Plant::RestoreCheckpoints(
    const std::vector<LineCheckpoint>& checkpoints) {
  std::vector<const LineCheckpoint*> order;
  for (const LineCheckpoint& c : checkpoints) order.push_back(&c);
  std::stable_sort(
      order.begin(), order.end(),
      [](const LineCheckpoint* a, const LineCheckpoint* b) { return a->position < b->position; });
  std::vector<RestoreNote> notes;
  for (const LineCheckpoint* c : order) {
    RestoreNote note;
    note.line = c->line;
    const std::size_t before = monitors_.size();
    Entry* entry = FindOrCreate(c->line);
    if (entry == nullptr || monitors_.size() == before) {
      note.what = entry == nullptr ? "more lines than max_lines; not restored"
                                   : "the line already exists; not restored";
      notes.push_back(std::move(note));
      continue;
    }
    entry->last_arrival_ms = c->last_arrival_ms;
    record_clock_ms_ = std::max(record_clock_ms_, c->record_clock_ms);
    const Status monitor = entry->monitor->RestoreCheckpoint(c->monitor);
    note.monitor_restored = monitor.ok();
    if (!monitor.ok()) note.what = monitor.message();
    if (c->compliance) {
      Status lot =
          Status::Error("line " + c->line + ": lot not continued: the line keeps no lots now");
      if (entry->compliance) lot = entry->compliance->RestoreCheckpoint(*c->compliance);
      note.lot_continued = lot.ok() && c->compliance->lot_open;
      if (!lot.ok() && c->compliance->open_lot) {
        // Closed with the figures and verdicts it had under the settings it was kept with.
        closed_lots_.push_back(*c->compliance->open_lot);
        note.lot_closed = true;
        note.what +=
            std::string(note.what.empty() ? "" : "; ") + lot.message() + " (closed as partial)";
      }
    }
    notes.push_back(std::move(note));
  }
  // Silence deadlines are recomputed from the monitors on the next record.
  earliest_silence_deadline_ms_ = INT64_MIN;
  return notes;
}

}  // namespace heft
