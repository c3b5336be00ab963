#include "core/monitor/plant.h"

#include <algorithm>
#include <optional>
#include <string>

#include "core/monitor/line_compliance.h"
#include "core/monitor/line_monitor.h"

namespace heft {

Plant::Plant(PlantSettings settings) : settings_(std::move(settings)) {}
Plant::~Plant() = default;

const LineSettings& Plant::SettingsFor(std::string_view line) const {
  const auto it = settings_.lines.find(line);
  return it == settings_.lines.end() ? settings_.defaults : it->second;
}

Plant::Entry* Plant::FindOrCreate(std::string_view line) {
  if (const std::size_t* slot = index_.Find(line)) return &monitors_[*slot];
  if (monitors_.size() >= settings_.max_lines) return nullptr;
  const LineSettings& line_settings = SettingsFor(line);
  monitors_.push_back(
      {std::make_unique<LineMonitor>(std::string(line), line_settings, &designs_), nullptr, 0});
  MakeCompliance(monitors_.back(), line_settings);
  index_.Insert(line, monitors_.size() - 1);
  return &monitors_.back();
}

void Plant::MakeCompliance(Entry& entry, const LineSettings& line_settings) {
  entry.compliance.reset();
  if (!line_settings.nominal_g || line_settings.rules == "none") return;
  const auto table = settings_.rule_tables.find(line_settings.rules);
  if (table == settings_.rule_tables.end()) return;
  const Status status = LineCompliance::Create(entry.monitor->line(), line_settings, table->second,
                                               &entry.compliance);
  if (!status.ok()) compliance_problems_.push_back(status.message());
}

namespace {

std::string Figure(const std::optional<double>& value) {
  if (!value) return "none";
  std::string text = std::to_string(*value);
  text.erase(text.find_last_not_of('0') + 1);  // "503.000000" -> "503."
  if (!text.empty() && text.back() == '.') text.pop_back();
  return text;
}

void Note(std::string* what, const std::string& change) {
  if (!what->empty()) *what += ", ";
  *what += change;
}

// Settings the monitor's detectors were designed from (LineMonitor copies them).
bool SameDetection(const LineSettings& a, const LineSettings& b) {
  return a.false_alarms_per_day == b.false_alarms_per_day &&
         a.pack_rate_per_min == b.pack_rate_per_min && a.min_shift_sigma == b.min_shift_sigma &&
         a.baseline_packs == b.baseline_packs && a.silence_ms == b.silence_ms &&
         a.drift_lambda == b.drift_lambda && a.head_shift_sigma == b.head_shift_sigma &&
         a.spread_ratio == b.spread_ratio && a.min_cycle_sigma == b.min_cycle_sigma &&
         a.cycle_window_packs == b.cycle_window_packs &&
         a.cycle_every_packs == b.cycle_every_packs && a.run_rules == b.run_rules &&
         a.subgroup_packs == b.subgroup_packs && a.run_one_side_count == b.run_one_side_count &&
         a.run_trend_count == b.run_trend_count && a.run_sawtooth_count == b.run_sawtooth_count &&
         a.run_hugging_count == b.run_hugging_count &&
         a.run_avoiding_count == b.run_avoiding_count && a.stuck_packs == b.stuck_packs &&
         a.outlier_burst_packs == b.outlier_burst_packs &&
         a.settling_alarm_packs == b.settling_alarm_packs &&
         a.baseline_block_packs == b.baseline_block_packs &&
         a.gross_low_ratio == b.gross_low_ratio && a.gross_high_ratio == b.gross_high_ratio &&
         a.cost_per_kg == b.cost_per_kg && a.rejects_in_lot == b.rejects_in_lot &&
         a.compliance_hold_off_packs == b.compliance_hold_off_packs &&
         a.rules_allow_unconfirmed == b.rules_allow_unconfirmed;
}

}  // namespace

std::vector<Plant::ReloadNote> Plant::Reconfigure(PlantSettings settings) {
  settings_ = std::move(settings);
  std::vector<ReloadNote> notes;
  for (Entry& entry : monitors_) {
    const LineSettings& before = entry.monitor->settings();
    const LineSettings& after = SettingsFor(entry.monitor->line());
    ReloadNote note;
    note.line = entry.monitor->line();
    if (before.nominal_g != after.nominal_g) {
      Note(&note.what, "nominal_g " + Figure(before.nominal_g) + " -> " + Figure(after.nominal_g));
    }
    if (before.target_g != after.target_g) {
      Note(&note.what, "target_g " + Figure(before.target_g) + " -> " + Figure(after.target_g));
    }
    if (before.heads != after.heads) {
      Note(&note.what,
           "heads " + std::to_string(before.heads) + " -> " + std::to_string(after.heads));
    }
    if (before.rules != after.rules)
      Note(&note.what, "rules " + before.rules + " -> " + after.rules);
    if (!note.what.empty()) {
      note.restarted = true;
      if (entry.compliance) entry.compliance->CloseLot(true, &closed_lots_);
      entry.monitor = std::make_unique<LineMonitor>(note.line, after, &designs_);
      MakeCompliance(entry, after);
      notes.push_back(std::move(note));
    } else if (!SameDetection(before, after)) {
      note.what = "detection or lot settings changed; they apply after a restart";
      notes.push_back(std::move(note));
    }
  }
  // Silence deadlines are recomputed from the monitors on the next record.
  earliest_silence_deadline_ms_ = INT64_MIN;
  return notes;
}

Plant::Accepted Plant::Accept(const RecordView& record, std::int64_t index, std::int64_t arrival_ms,
                              std::vector<Finding>* out) {
  Entry* entry = FindOrCreate(record.line);
  if (entry == nullptr) return Accepted::kTooManyLines;
  LineMonitor& monitor = *entry->monitor;
  Pack pack;
  pack.index = index;
  pack.time_ms = record.has_time ? record.time_ms : arrival_ms;
  pack.grams = record.grams;
  pack.head = record.head;
  pack.status = record.status;

  // The records' own clock tells when other lines have gone quiet, the same
  // way live and in replay.
  if (pack.time_ms > record_clock_ms_) record_clock_ms_ = pack.time_ms;
  if (record_clock_ms_ > earliest_silence_deadline_ms_) {
    earliest_silence_deadline_ms_ = INT64_MAX;
    for (auto& other : monitors_) {
      LineMonitor& m = *other.monitor;
      if (&m == &monitor || !m.has_packs()) continue;
      m.CheckSilence(record_clock_ms_, m.last_time_ms(), index, out);
      if (!m.silent()) {
        earliest_silence_deadline_ms_ =
            std::min(earliest_silence_deadline_ms_, m.last_time_ms() + m.settings().silence_ms);
      }
    }
  }
  monitor.Push(pack, out);
  if (entry->compliance) entry->compliance->Push(pack, out, &closed_lots_);
  earliest_silence_deadline_ms_ = std::min(earliest_silence_deadline_ms_,
                                           monitor.last_time_ms() + monitor.settings().silence_ms);
  entry->last_arrival_ms = arrival_ms;
  return Accepted::kYes;
}

void Plant::AdvanceTo(std::int64_t now_ms, std::int64_t index, std::vector<Finding>* out) {
  for (auto& entry : monitors_) {
    entry.monitor->CheckSilence(now_ms, entry.last_arrival_ms, index, out);
  }
}

std::vector<LotReport> Plant::TakeClosedLots() {
  std::vector<LotReport> lots;
  lots.swap(closed_lots_);
  return lots;
}

void Plant::CloseAllLots(bool partial) {
  for (auto& entry : monitors_) {
    if (entry.compliance) entry.compliance->CloseLot(partial, &closed_lots_);
  }
}

bool Plant::CloseLot(std::string_view line, bool partial) {
  const std::size_t* slot = index_.Find(line);
  if (slot == nullptr) return false;
  Entry& entry = monitors_[*slot];
  if (!entry.compliance) return false;
  entry.compliance->CloseLot(partial, &closed_lots_);
  return true;
}

std::vector<LineSnapshot> Plant::Snapshot() const {
  std::vector<LineSnapshot> snapshots;
  snapshots.reserve(monitors_.size());
  for (const auto& entry : monitors_) snapshots.push_back(entry.monitor->Snapshot());
  return snapshots;
}

}  // namespace heft
