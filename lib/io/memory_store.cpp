// memory_store.cpp — MemoryStore: vectors behind the Store interface.
#include "io/memory_store.h"

#include <algorithm>
#include <utility>

namespace heft {

void MemoryStore::FailNextWrites(int count, std::string reason) {
  fail_remaining_ = std::max(0, count);
  fail_reason_ = reason.empty() ? "injected write failure" : std::move(reason);
}

Status MemoryStore::CheckFault() {
  ++write_calls_;
  if (fail_remaining_ > 0) {
    --fail_remaining_;
    ++failed_writes_;
    return Status::Error("memory store: " + fail_reason_);
  }
  return Status::Ok();
}

Status MemoryStore::UpsertLines(const std::vector<LineRow>& lines) {
  if (Status s = CheckFault(); !s.ok()) return s;
  for (const LineRow& row : lines) {
    auto it = std::find_if(lines_.begin(), lines_.end(),
                           [&](const LineRow& existing) { return existing.line == row.line; });
    if (it == lines_.end()) {
      lines_.push_back(row);
    } else {
      *it = row;
    }
  }
  return Status::Ok();
}

Status MemoryStore::WriteBatch(const std::vector<EventRow>& events,
                               const std::vector<SampleRow>& samples) {
  // Checked before anything is appended, so a failed batch stores nothing.
  if (Status s = CheckFault(); !s.ok()) return s;
  events_.insert(events_.end(), events.begin(), events.end());
  samples_.insert(samples_.end(), samples.begin(), samples.end());
  return Status::Ok();
}

Status MemoryStore::QueryEvents(const EventQuery& query, std::vector<EventRow>* out) {
  out->clear();
  for (const EventRow& row : events_) {
    const Finding& f = row.finding;
    if (query.line && f.line != *query.line) continue;
    if (query.kind && f.kind != *query.kind) continue;
    if (query.since_ms && f.at_time_ms < *query.since_ms) continue;
    if (query.until_ms && f.at_time_ms >= *query.until_ms) continue;
    out->push_back(row);
    if (query.limit > 0 && out->size() >= query.limit) break;
  }
  return Status::Ok();
}

Status MemoryStore::CountSamples(const std::string& line, std::int64_t* count) {
  *count = line.empty() ? static_cast<std::int64_t>(samples_.size())
                        : std::count_if(samples_.begin(), samples_.end(),
                                        [&](const SampleRow& s) { return s.line == line; });
  return Status::Ok();
}

Status MemoryStore::PruneSamples(std::int64_t cutoff_ms, std::int64_t* deleted) {
  if (deleted != nullptr) *deleted = 0;
  if (Status s = CheckFault(); !s.ok()) return s;
  const auto before = samples_.size();
  std::erase_if(samples_, [&](const SampleRow& s) { return s.time_ms < cutoff_ms; });
  if (deleted != nullptr) *deleted = static_cast<std::int64_t>(before - samples_.size());
  return Status::Ok();
}

Status MemoryStore::WriteLots(const std::vector<LotRow>& lots) {
  if (Status s = CheckFault(); !s.ok()) return s;
  lots_.insert(lots_.end(), lots.begin(), lots.end());
  return Status::Ok();
}

Status MemoryStore::QueryLots(const LotQuery& query, std::vector<LotRow>* out) {
  out->clear();
  for (const LotRow& row : lots_) {
    const LotReport& lot = row.lot;
    if (query.line && lot.line != *query.line) continue;
    if (query.since_ms && lot.figures.last_time_ms < *query.since_ms) continue;
    if (query.until_ms && lot.figures.first_time_ms >= *query.until_ms) continue;
    out->push_back(row);
    if (query.limit > 0 && out->size() >= query.limit) break;
  }
  return Status::Ok();
}

Status MemoryStore::SaveLineCheckpoints(const std::vector<LineCheckpointRow>& rows) {
  if (Status s = CheckFault(); !s.ok()) return s;
  checkpoints_ = rows;
  return Status::Ok();
}

Status MemoryStore::LoadLineCheckpoints(std::vector<LineCheckpointRow>* out) {
  *out = checkpoints_;
  std::sort(out->begin(), out->end(),
            [](const LineCheckpointRow& a, const LineCheckpointRow& b) { return a.line < b.line; });
  return Status::Ok();
}

}  // namespace heft
