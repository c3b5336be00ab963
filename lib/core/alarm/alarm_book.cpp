#include "core/alarm/alarm_book.h"

#include <algorithm>
#include <cmath>
#include <utility>

namespace heft {
namespace {

AlarmPriority OneUp(AlarmPriority p) {
  return p == AlarmPriority::kLow ? AlarmPriority::kMedium : AlarmPriority::kHigh;
}

bool IsExemptKind(FindingKind kind) {
  return kind == FindingKind::kSettling || kind == FindingKind::kSilence;
}

// Drops times older than the window ending at now.
void Prune(std::deque<std::int64_t>* times, std::int64_t now, std::int64_t window) {
  while (!times->empty() && times->front() <= now - window) times->pop_front();
}

}  // namespace

AlarmBook::AlarmBook(AlarmSettings settings, std::string run_id, std::int64_t first_seq)
    : settings_(std::move(settings)), run_id_(std::move(run_id)), next_seq_(first_seq) {}

std::string AlarmBook::AreaOf(std::string_view line) const {
  auto it = settings_.area_of_line.find(line);
  return it != settings_.area_of_line.end() ? it->second : std::string(line);
}

bool AlarmBook::InFlood(std::string_view area) const {
  auto it = areas_.find(area);
  return it != areas_.end() && it->second.flood;
}

AlarmPriority AlarmBook::PriorityFor(const Finding& f) const {
  AlarmPriority p = settings_.priority[static_cast<int>(f.kind)];
  const bool large = f.size_sigma && std::fabs(*f.size_sigma) >= settings_.escalate_sigma;
  if (f.severity == Severity::kAlarm || large) p = OneUp(p);
  return p;
}

AlarmBook::Entry& AlarmBook::EntryFor(const Finding& f) {
  std::string id = MakeAlarmId(f.line, KindName(f.kind), f.head);
  auto it = entries_.find(id);
  if (it != entries_.end()) return it->second;
  Entry e;
  e.alarm_id = id;
  e.line = f.line;
  e.area = AreaOf(f.line);
  e.kind = std::string(KindName(f.kind));
  e.head = f.head;
  e.exempt = IsExemptKind(f.kind);
  return entries_.emplace(std::move(id), std::move(e)).first->second;
}

AlarmBook::Entry* AlarmBook::Find(std::string_view alarm_id) {
  auto it = entries_.find(alarm_id);
  return it == entries_.end() ? nullptr : &it->second;
}

bool AlarmBook::Hidden(const Entry& e) const {
  if (e.exempt || e.is_flood || e.carried) return false;
  auto it = lines_.find(e.line);
  return it != lines_.end() && it->second.suppressed;
}

void AlarmBook::Restore(const std::vector<RestoredAlarm>& alarms, std::int64_t next_seq,
                        std::int64_t now_ms, std::vector<AlarmTransition>* out) {
  next_seq_ = std::max(next_seq_, next_seq);
  for (const RestoredAlarm& r : alarms) {
    const bool wanted = IsActive(r.state) || r.state == AlarmState::kClearedUnack ||
                        (r.state == AlarmState::kShelved && r.shelved_until_ms);
    if (!wanted || r.alarm_id.empty() || entries_.count(r.alarm_id) != 0) continue;
    Entry e;
    e.alarm_id = r.alarm_id;
    e.line = r.line;
    e.area = r.area;
    e.kind = r.kind;
    e.head = r.head;
    e.is_flood = r.kind == kFloodKind;
    e.exempt =
        r.kind == KindName(FindingKind::kSettling) || r.kind == KindName(FindingKind::kSilence);
    e.carried = !e.is_flood;
    e.state = r.state;
    e.priority = r.priority;
    e.cond = IsActive(r.state) || (r.state == AlarmState::kShelved && r.shelved_while_active);
    if (r.state == AlarmState::kActiveAck) e.acked_ms = r.since_ms;
    if (r.state == AlarmState::kClearedUnack) e.last_clear_ms = r.since_ms;
    if (r.state == AlarmState::kShelved) e.shelved_until_ms = *r.shelved_until_ms;
    Entry& stored = entries_.emplace(r.alarm_id, std::move(e)).first->second;
    if (stored.is_flood && IsActive(stored.state)) {
      // The starts in the window were not kept, so this run is not in flood.
      stored.cond = false;
      Emit(stored,
           stored.state == AlarmState::kActiveAck ? AlarmState::kNormal : AlarmState::kClearedUnack,
           {.cause = AlarmCause::kSystem,
            .why = "flood_ended",
            .note = "not carried over a restart"},
           now_ms, out);
    }
  }
}

void AlarmBook::OnFindings(const std::vector<Finding>& findings, std::int64_t now_ms,
                           std::vector<AlarmTransition>* out) {
  Advance(now_ms, out);
  std::vector<std::string> touched;
  for (const Finding& f : findings) {
    LineState& line = lines_[f.line];
    if (std::find(touched.begin(), touched.end(), f.line) == touched.end()) {
      touched.push_back(f.line);
    }
    const bool raised = f.transition == Transition::kRaised;
    if (f.kind == FindingKind::kSettling) {
      line.settling = raised;
      // Settling itself is only an alarm when it takes too long (Severity kAlarm).
      if (raised && f.severity != Severity::kAlarm) continue;
    } else if (f.kind == FindingKind::kSilence) {
      line.silent = raised;
    }
    Entry& e = EntryFor(f);
    if (raised) {
      Raise(e, f, now_ms, out);
    } else {
      Clear(e, f, now_ms, out);
    }
  }
  // After the whole batch: a restart clears, then settles, in one batch, and
  // the alarms should not flicker out of suppression in between.
  for (const std::string& line : touched) UpdateSuppression(line, now_ms, out);
}

void AlarmBook::Raise(Entry& e, const Finding& f, std::int64_t now,
                      std::vector<AlarmTransition>* out) {
  e.finding = f;
  e.carried = false;  // a restored alarm with its condition true: attached, nothing new
  const AlarmPriority p = PriorityFor(f);
  if (e.cond) {
    e.off_due.reset();
    if (p > e.priority) {
      e.priority = p;
      if (!e.chattering && IsActive(e.state)) {
        Emit(e, AlarmState::kActiveUnack, {.why = "escalated"}, now, out);
      }
    }
    return;
  }
  if (e.on_due) {
    e.priority = std::max(e.priority, p);
    return;
  }
  e.priority = p;
  std::int64_t hold = settings_.on_delay_ms;
  if (e.last_clear_ms && now - *e.last_clear_ms < settings_.realarm_deadband_ms) {
    hold = std::max(hold, settings_.realarm_deadband_ms);
    ++counters_.deadband_held;
  }
  if (hold <= 0) {
    SetCondition(e, true, now, out);
  } else {
    e.on_due = now + hold;
  }
}

void AlarmBook::Clear(Entry& e, const Finding& f, std::int64_t now,
                      std::vector<AlarmTransition>* out) {
  e.carried = false;
  if (e.on_due) {
    e.on_due.reset();
    ++counters_.fleeting_dropped;
    return;
  }
  if (!e.cond) return;
  e.finding = f;
  if (settings_.off_delay_ms <= 0) {
    SetCondition(e, false, now, out);
  } else if (!e.off_due) {
    e.off_due = now + settings_.off_delay_ms;
  }
}

void AlarmBook::SetCondition(Entry& e, bool cond, std::int64_t now,
                             std::vector<AlarmTransition>* out) {
  e.cond = cond;
  if (!cond) {
    e.last_clear_ms = now;
    if (e.chattering) return;  // held; released by Advance once quiet
    if (e.state == AlarmState::kActiveUnack) {
      Emit(e, AlarmState::kClearedUnack, {.why = "cleared"}, now, out);
    } else if (e.state == AlarmState::kActiveAck) {
      Emit(e, AlarmState::kNormal, {.why = "cleared"}, now, out);
    } else if (e.state == AlarmState::kSuppressed) {
      Emit(e, AlarmState::kNormal, {.why = "cleared", .annunciate = false}, now, out);
    }
    return;
  }
  if (e.chattering) return;
  e.activations.push_back(now);
  Prune(&e.activations, now, settings_.chatter_window_ms);
  if (e.state == AlarmState::kShelved) return;  // still evaluated, not shown
  if (Hidden(e)) {
    if (e.state != AlarmState::kSuppressed) {
      Emit(e, AlarmState::kSuppressed,
           {.why = "suppressed", .note = "line is settling or silent", .annunciate = false}, now,
           out);
    }
    return;
  }
  if (settings_.chatter_count > 0 &&
      static_cast<int>(e.activations.size()) >= settings_.chatter_count) {
    e.chattering = true;
    ++counters_.chatter_reports;
    Emit(e, AlarmState::kActiveUnack, {.why = "chattering"}, now, out);
    return;
  }
  Emit(e, AlarmState::kActiveUnack, {.why = "raised"}, now, out);
}

void AlarmBook::UpdateSuppression(const std::string& line, std::int64_t now,
                                  std::vector<AlarmTransition>* out) {
  LineState& ls = lines_[line];
  const bool want = ls.settling || ls.silent;
  if (want == ls.suppressed) return;
  ls.suppressed = want;
  const std::string note = ls.silent ? "line is silent" : "line is settling";
  for (auto& [id, e] : entries_) {
    if (e.line != line || e.exempt || e.is_flood || e.carried) continue;
    if (want) {
      if (IsActive(e.state)) {
        e.chattering = false;
        Emit(e, AlarmState::kSuppressed, {.why = "suppressed", .note = note}, now, out);
      }
    } else if (e.state == AlarmState::kSuppressed) {
      Emit(e, e.cond ? AlarmState::kActiveUnack : AlarmState::kNormal,
           {.why = "unsuppressed", .annunciate = e.cond}, now, out);
    }
  }
}

void AlarmBook::Advance(std::int64_t now, std::vector<AlarmTransition>* out) {
  for (auto& [id, e] : entries_) {
    if (e.on_due && now >= *e.on_due) {
      e.on_due.reset();
      SetCondition(e, true, now, out);
    }
    if (e.off_due && now >= *e.off_due) {
      e.off_due.reset();
      SetCondition(e, false, now, out);
    }
    if (e.chattering && !e.cond && e.last_clear_ms &&
        now - *e.last_clear_ms >= settings_.chatter_window_ms) {
      e.chattering = false;
      e.activations.clear();
      if (e.state == AlarmState::kActiveUnack) {
        Emit(e, AlarmState::kClearedUnack, {.why = "chatter_ended"}, now, out);
      } else if (e.state == AlarmState::kActiveAck) {
        Emit(e, AlarmState::kNormal, {.why = "chatter_ended"}, now, out);
      }
    }
    if (e.state == AlarmState::kShelved && now >= e.shelved_until_ms) {
      LeaveShelf(e, {.cause = AlarmCause::kSystem, .why = "shelve_expired"}, now, out);
    }
    if (settings_.realarm_ms > 0 && e.state == AlarmState::kActiveAck && !e.chattering &&
        now - e.acked_ms >= settings_.realarm_ms) {
      Emit(e, AlarmState::kActiveUnack, {.cause = AlarmCause::kSystem, .why = "realarm"}, now, out);
    }
  }
  for (auto& [area, state] : areas_) {
    if (state.flood) CheckFloodEnd(area, now, out);
  }
}

void AlarmBook::CheckFloodEnd(const std::string& area, std::int64_t now,
                              std::vector<AlarmTransition>* out) {
  AreaState& as = areas_[area];
  Prune(&as.starts, now, settings_.flood_window_ms);
  if (!as.flood || static_cast<int>(as.starts.size()) >= settings_.flood_end_below) return;
  as.flood = false;
  Entry* flood = Find(MakeAlarmId(area, kFloodKind, std::nullopt));
  if (flood == nullptr) return;
  flood->cond = false;
  const int held = as.held;
  as.held = 0;
  const AlarmState to =
      flood->state == AlarmState::kActiveAck ? AlarmState::kNormal : AlarmState::kClearedUnack;
  const std::size_t before = out->size();
  Emit(*flood, to, {.cause = AlarmCause::kSystem, .why = "flood_ended"}, now, out);
  if (out->size() > before) out->back().flood_count = held;
}

void AlarmBook::LeaveShelf(Entry& e, const Emission& how, std::int64_t now,
                           std::vector<AlarmTransition>* out) {
  // operations.md §1.2: back to B if the condition is still true, else A.
  AlarmState to = e.cond ? AlarmState::kActiveUnack : AlarmState::kNormal;
  if (e.cond && Hidden(e)) to = AlarmState::kSuppressed;
  Emit(e, to, how, now, out);
}

Status AlarmBook::Acknowledge(std::string_view alarm_id, std::string_view who,
                              std::string_view note, std::int64_t now,
                              std::vector<AlarmTransition>* out) {
  Advance(now, out);
  Entry* e = Find(alarm_id);
  if (e == nullptr) return Status::Error("no alarm \"" + std::string(alarm_id) + "\"");
  const Emission how{
      .cause = AlarmCause::kOperator, .why = "acknowledged", .who = who, .note = note};
  if (e->state == AlarmState::kActiveUnack) {
    e->acked_ms = now;
    Emit(*e, AlarmState::kActiveAck, how, now, out);
  } else if (e->state == AlarmState::kClearedUnack) {
    Emit(*e, AlarmState::kNormal, how, now, out);
  } else {
    return Status::Error("alarm \"" + e->alarm_id + "\" is " +
                         std::string(AlarmStateName(e->state)) + ": nothing to acknowledge");
  }
  return Status::Ok();
}

Status AlarmBook::Shelve(std::string_view alarm_id, std::optional<std::int64_t> duration_ms,
                         std::string_view who, std::string_view note, std::int64_t now,
                         std::vector<AlarmTransition>* out) {
  Advance(now, out);
  Entry* e = Find(alarm_id);
  if (e == nullptr) return Status::Error("no alarm \"" + std::string(alarm_id) + "\"");
  if (e->state == AlarmState::kShelved) {
    return Status::Error("alarm \"" + e->alarm_id + "\" is already shelved");
  }
  const std::int64_t duration = duration_ms.value_or(settings_.shelve_default_ms);
  if (duration <= 0 || duration > settings_.shelve_max_ms) {
    return Status::Error("shelving time must be more than 0 and at most " +
                         std::to_string(settings_.shelve_max_ms / 1000) + " s");
  }
  e->shelved_until_ms = now + duration;
  Emit(*e, AlarmState::kShelved,
       {.cause = AlarmCause::kOperator, .why = "shelved", .who = who, .note = note}, now, out);
  return Status::Ok();
}

Status AlarmBook::Unshelve(std::string_view alarm_id, std::string_view who, std::string_view note,
                           std::int64_t now, std::vector<AlarmTransition>* out) {
  Advance(now, out);
  Entry* e = Find(alarm_id);
  if (e == nullptr) return Status::Error("no alarm \"" + std::string(alarm_id) + "\"");
  if (e->state != AlarmState::kShelved) {
    return Status::Error("alarm \"" + e->alarm_id + "\" is not shelved (it is " +
                         std::string(AlarmStateName(e->state)) + ")");
  }
  LeaveShelf(*e, {.cause = AlarmCause::kOperator, .why = "unshelved", .who = who, .note = note},
             now, out);
  return Status::Ok();
}

LineAlarmSummary AlarmBook::Summarise(std::string_view line) const {
  LineAlarmSummary s;
  for (const auto& [id, e] : entries_) {
    if (e.line != line || e.is_flood) continue;
    if (IsActive(e.state)) {
      ++s.active;
      if (!s.highest || e.priority > *s.highest) s.highest = e.priority;
    }
    if (e.state == AlarmState::kActiveUnack || e.state == AlarmState::kClearedUnack) {
      ++s.unacknowledged;
    }
    if (e.state == AlarmState::kShelved) ++s.shelved;
    if (e.state == AlarmState::kSuppressed) ++s.suppressed;
  }
  return s;
}

void AlarmBook::Emit(Entry& e, AlarmState to, const Emission& how, std::int64_t now,
                     std::vector<AlarmTransition>* out) {
  const AlarmState from = e.state;
  e.state = to;
  AlarmTransition t;
  t.seq = next_seq_++;
  t.event_id = run_id_.empty() ? std::to_string(t.seq) : run_id_ + "-" + std::to_string(t.seq);
  t.alarm_id = e.alarm_id;
  t.line = e.line;
  t.area = e.area;
  t.kind = e.kind;
  t.head = e.head;
  t.from = from;
  t.to = to;
  t.priority = e.priority;
  t.time_ms = now;
  t.cause = how.cause;
  t.who = std::string(how.who);
  t.why = std::string(how.why);
  t.note = std::string(how.note);
  t.annunciate = how.annunciate;
  t.chattering = e.chattering;
  if (to == AlarmState::kShelved) t.shelved_until_ms = e.shelved_until_ms;
  if (how.cause == AlarmCause::kProcess) t.finding = e.finding;
  ++counters_.transitions;

  if (!e.is_flood) {
    AreaState& area = areas_[e.area];
    Prune(&area.starts, now, settings_.flood_window_ms);
    const bool start = to == AlarmState::kActiveUnack && !IsActive(from);
    if (start) area.starts.push_back(now);
    if (start && !area.flood &&
        static_cast<int>(area.starts.size()) > settings_.flood_start_above) {
      area.flood = true;
      area.held = 0;
      ++counters_.floods;
      std::string flood_id = MakeAlarmId(e.area, kFloodKind, std::nullopt);
      auto it = entries_.find(flood_id);
      if (it == entries_.end()) {
        Entry f;
        f.alarm_id = flood_id;
        f.area = e.area;
        f.kind = std::string(kFloodKind);
        f.is_flood = true;
        f.priority = AlarmPriority::kHigh;
        it = entries_.emplace(std::move(flood_id), std::move(f)).first;
      }
      // The transition that tipped the area into flood is itself held.
      t.annunciate = false;
      ++area.held;
      ++counters_.flood_held;
      t.line_summary = Summarise(e.line);
      out->push_back(std::move(t));
      Entry& flood = it->second;
      flood.cond = true;
      const std::size_t at = out->size();
      Emit(flood, AlarmState::kActiveUnack, {.cause = AlarmCause::kSystem, .why = "flood_started"},
           now, out);
      (*out)[at].flood_count = static_cast<int>(area.starts.size());
      return;
    }
    if (area.flood && t.annunciate) {
      t.annunciate = false;
      ++area.held;
      ++counters_.flood_held;
    }
  }
  if (!e.line.empty()) t.line_summary = Summarise(e.line);
  out->push_back(std::move(t));
}

std::vector<AlarmBook::AlarmView> AlarmBook::Alarms() const {
  std::vector<AlarmView> views;
  for (const auto& [id, e] : entries_) {
    AlarmView v;
    v.alarm_id = e.alarm_id;
    v.line = e.line;
    v.area = e.area;
    v.kind = e.kind;
    v.head = e.head;
    v.state = e.state;
    v.priority = e.priority;
    v.condition = e.cond;
    v.chattering = e.chattering;
    if (e.state == AlarmState::kShelved) v.shelved_until_ms = e.shelved_until_ms;
    views.push_back(std::move(v));
  }
  return views;
}

}  // namespace heft
