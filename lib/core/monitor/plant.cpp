#include "core/monitor/plant.h"

#include <algorithm>

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
  if (last_used_ < monitors_.size() && monitors_[last_used_].monitor->line() == line) {
    return &monitors_[last_used_];
  }
  auto it = std::lower_bound(
      index_.begin(), index_.end(), line,
      [](const auto& entry, std::string_view key) { return entry.first < key; });
  if (it != index_.end() && it->first == line) {
    last_used_ = it->second;
    return &monitors_[it->second];
  }
  if (monitors_.size() >= settings_.max_lines) return nullptr;
  const LineSettings& line_settings = SettingsFor(line);
  monitors_.push_back(
      {std::make_unique<LineMonitor>(std::string(line), line_settings), nullptr, 0});
  if (line_settings.nominal_g && line_settings.rules != "none") {
    const auto table = settings_.rule_tables.find(line_settings.rules);
    if (table != settings_.rule_tables.end()) {
      const Status status = LineCompliance::Create(std::string(line), line_settings, table->second,
                                                   &monitors_.back().compliance);
      if (!status.ok()) compliance_problems_.push_back(status.message());
    }
  }
  last_used_ = monitors_.size() - 1;
  index_.insert(it, {std::string(line), last_used_});
  return &monitors_.back();
}

Plant::Accepted Plant::Accept(const RecordView& record, std::int64_t index,
                              std::int64_t arrival_ms, std::vector<Finding>* out) {
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
  earliest_silence_deadline_ms_ = std::min(
      earliest_silence_deadline_ms_, monitor.last_time_ms() + monitor.settings().silence_ms);
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
  const auto it = std::lower_bound(
      index_.begin(), index_.end(), line,
      [](const auto& entry, std::string_view key) { return entry.first < key; });
  if (it == index_.end() || it->first != line) return false;
  Entry& entry = monitors_[it->second];
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
