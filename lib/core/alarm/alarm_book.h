// alarm_book.h — the alarm lifecycle: turns findings into ISA-18.2 / IEC 62682
// state transitions per alarm (line, kind[, head]).
//
// Inputs: batches of findings (as Plant returns them), the passage of time
// (Advance), and operator actions (Acknowledge, Shelve, Unshelve). Output:
// AlarmTransition values, every one of them (the caller stores them all and
// sends those with `annunciate`). Rules, all configurable (AlarmSettings):
//   - priority from the kind, one level up for Severity::kAlarm or a large
//     size in sigma;
//   - on-delay and off-delay: a raise (clear) must persist before the alarm
//     activates (returns); a raise that clears within the on-delay is a
//     fleeting alarm and is dropped (counted);
//   - re-alarm deadband: a raise soon after the alarm cleared must persist
//     the deadband before it is annunciated again;
//   - chattering: chatter_count activations within chatter_window → one
//     `chattering` transition, then the alarm is held active (no further
//     transitions) until it has been clear for a whole window;
//   - suppressed by design: while a line is settling or silent (its settling
//     and silence findings say so) its other alarms are hidden;
//   - shelving with an expiry, refused beyond shelve_max;
//   - flood per operator area: more than flood_start_above alarm starts in
//     flood_window → one `flood_started` summary, then the area's transitions
//     are held (stored, not annunciated) until fewer than flood_end_below
//     starts remain in the window (`flood_ended` with the count held).
//   - restart: Restore() takes the unfinished alarms of an earlier run; they
//     keep their state, and a raise of the same line, kind and head attaches
//     to them without a new transition.
// Pure: time is passed in; no I/O. Not thread-safe: one owner thread.
#pragma once

#include <cstdint>
#include <deque>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/alarm/alarm_settings.h"
#include "core/alarm/alarm_types.h"
#include "core/alarm/restored_alarm.h"
#include "core/model/finding.h"
#include "core/model/status.h"

namespace heft {

class AlarmBook {
 public:
  // `run_id` prefixes event ids ("RUN-SEQ"); `first_seq` is the first sequence
  // number handed out (a restarted daemon continues after its stored ones).
  AlarmBook(AlarmSettings settings, std::string run_id, std::int64_t first_seq = 1);

  // Before the first finding: takes over the alarms an earlier run left in
  // active_unack, active_ack, cleared_unack or shelved (others are skipped)
  // and continues the sequence at `next_seq` if that is higher. Their
  // condition is carried over (true for the active states, the state before
  // shelving for shelved ones) until a finding of this run raises it (the
  // alarm is kept as it is: no new transition) or clears it; until then a
  // line's start-up settling does not suppress them, since it says nothing
  // about a condition seen before the restart. Flood state is not carried:
  // an active flood summary ends here (`flood_ended`, into *out).
  void Restore(const std::vector<RestoredAlarm>& alarms, std::int64_t next_seq, std::int64_t now_ms,
               std::vector<AlarmTransition>* out);

  // One batch of findings (Plant::Accept/AdvanceTo output) at wall time now_ms.
  void OnFindings(const std::vector<Finding>& findings, std::int64_t now_ms,
                  std::vector<AlarmTransition>* out);
  // Timers: delays, chatter release, shelve expiry, re-alarm, flood end.
  void Advance(std::int64_t now_ms, std::vector<AlarmTransition>* out);

  // Operator actions; an error (unknown alarm, wrong state, too long) changes nothing.
  Status Acknowledge(std::string_view alarm_id, std::string_view who, std::string_view note,
                     std::int64_t now_ms, std::vector<AlarmTransition>* out);
  // duration_ms nullopt = shelve_default_ms.
  Status Shelve(std::string_view alarm_id, std::optional<std::int64_t> duration_ms,
                std::string_view who, std::string_view note, std::int64_t now_ms,
                std::vector<AlarmTransition>* out);
  Status Unshelve(std::string_view alarm_id, std::string_view who, std::string_view note,
                  std::int64_t now_ms, std::vector<AlarmTransition>* out);

  struct AlarmView {
    std::string alarm_id, line, area, kind;
    std::optional<int> head;
    AlarmState state = AlarmState::kNormal;
    AlarmPriority priority = AlarmPriority::kLow;
    bool condition = false;  // the finding is raised (after the delays)
    bool chattering = false;
    std::optional<std::int64_t> shelved_until_ms;
  };
  std::vector<AlarmView> Alarms() const;  // ordered by alarm id

  struct Counters {
    std::int64_t transitions = 0;
    std::int64_t fleeting_dropped = 0;  // raises cleared within the on-delay
    std::int64_t deadband_held = 0;     // re-raises made to wait for the deadband
    std::int64_t chatter_reports = 0;
    std::int64_t floods = 0;
    std::int64_t flood_held = 0;  // transitions held (not annunciated) in floods
  };
  const Counters& counters() const { return counters_; }
  bool InFlood(std::string_view area) const;
  std::string AreaOf(std::string_view line) const;
  std::int64_t next_seq() const { return next_seq_; }

 private:
  struct Entry {
    std::string alarm_id, line, area, kind;
    std::optional<int> head;
    bool is_flood = false;
    bool exempt = false;   // settling/silence alarms: never suppressed by design
    bool carried = false;  // restored; no finding of this run has spoken about it yet
    AlarmState state = AlarmState::kNormal;
    AlarmPriority priority = AlarmPriority::kLow;
    bool cond = false;                    // condition after the delays
    std::optional<std::int64_t> on_due;   // raise waiting for its on-delay/deadband
    std::optional<std::int64_t> off_due;  // clear waiting for its off-delay
    std::optional<std::int64_t> last_clear_ms;
    std::deque<std::int64_t> activations;  // for chattering
    bool chattering = false;
    std::int64_t acked_ms = 0;
    std::int64_t shelved_until_ms = 0;
    std::optional<Finding> finding;  // the latest finding
  };
  struct LineState {
    bool settling = false;
    bool silent = false;
    bool suppressed = false;
  };
  struct AreaState {
    std::deque<std::int64_t> starts;  // alarm starts within the flood window
    bool flood = false;
    int held = 0;
  };
  struct Emission {
    AlarmCause cause = AlarmCause::kProcess;
    std::string_view why = {};
    std::string_view who = "heftd";
    std::string_view note = {};
    bool annunciate = true;
  };

  Entry& EntryFor(const Finding& f);
  Entry* Find(std::string_view alarm_id);
  AlarmPriority PriorityFor(const Finding& f) const;
  void Raise(Entry& e, const Finding& f, std::int64_t now, std::vector<AlarmTransition>* out);
  void Clear(Entry& e, const Finding& f, std::int64_t now, std::vector<AlarmTransition>* out);
  void SetCondition(Entry& e, bool cond, std::int64_t now, std::vector<AlarmTransition>* out);
  void UpdateSuppression(const std::string& line, std::int64_t now,
                         std::vector<AlarmTransition>* out);
  bool Hidden(const Entry& e) const;  // line suppressed and e not exempt
  void LeaveShelf(Entry& e, const Emission& how, std::int64_t now,
                  std::vector<AlarmTransition>* out);
  void Emit(Entry& e, AlarmState to, const Emission& how, std::int64_t now,
            std::vector<AlarmTransition>* out);
  void CheckFloodEnd(const std::string& area, std::int64_t now, std::vector<AlarmTransition>* out);
  LineAlarmSummary Summarise(std::string_view line) const;

  AlarmSettings settings_;
  std::string run_id_;
  std::int64_t next_seq_;
  std::map<std::string, Entry, std::less<>> entries_;
  std::map<std::string, LineState, std::less<>> lines_;
  std::map<std::string, AreaState, std::less<>> areas_;
  Counters counters_;
};

}  // namespace heft
