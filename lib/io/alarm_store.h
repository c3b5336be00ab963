// alarm_store.h — the alarm tables of a heft database (schema version 4):
// transitions, the delivery outbox, operator requests, current alarm states.
//
// Its own SQLite connection on the file heftd writes (WAL: one writer at a
// time, readers never blocked), so the delivery worker threads and the `heft
// ack|shelve|unshelve|alarms` commands can each hold one. Open() migrates the
// file through SqliteStore first. One AlarmStore per thread; not thread-safe.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "core/alarm/alarm_types.h"
#include "core/alarm/restored_alarm.h"
#include "core/model/status.h"

namespace heft {

struct OutboxItem {
  std::int64_t id = 0;
  std::string event_id;
  std::string channel;
  std::string payload;  // the transition JSON (io/alarm_json)
  std::int64_t created_ms = 0;
  std::int64_t expires_ms = 0;
  std::int64_t next_attempt_ms = 0;
  int attempts = 0;
};

struct OutboxCounts {
  std::int64_t pending = 0, delivered = 0, expired = 0;
};

struct AlarmRequest {
  std::int64_t id = 0;
  std::string action;  // ack, shelve, unshelve
  std::string alarm_id;
  std::string who;
  std::string note;
  std::optional<std::int64_t> shelve_ms;
  std::int64_t requested_ms = 0;
  std::string status = "pending";  // pending, done, refused
  std::string result;
};

struct AlarmStateRow {
  std::string alarm_id, line, area, kind;
  std::optional<int> head;
  std::string state, priority;
  std::int64_t since_ms = 0;
  std::optional<std::int64_t> shelved_until_ms;
  std::string last_event_id, message;
};

// A transition ready to store: its JSON and the channels it goes to.
struct TransitionRecord {
  AlarmTransition transition;
  std::string json;
  std::vector<std::string> channels;
  std::int64_t expires_ms = 0;
};

class AlarmStore {
 public:
  enum class Mode { kReadWrite, kReadOnly };
  static Status Open(const std::string& path, Mode mode, std::unique_ptr<AlarmStore>* out);
  ~AlarmStore();
  AlarmStore(const AlarmStore&) = delete;
  AlarmStore& operator=(const AlarmStore&) = delete;

  // Transitions, alarm_state upserts and outbox rows, in one transaction.
  // A transition whose event_id is already stored is skipped (idempotent).
  Status Record(const std::vector<TransitionRecord>& records, std::int64_t now_ms);

  // Pending outbox rows of `channel`, oldest first, due or not (a channel
  // delivers in order, so a row waiting for its retry holds those after it).
  Status PendingOutbox(const std::string& channel, int limit, std::vector<OutboxItem>* out);
  Status MarkDelivered(std::int64_t id, std::int64_t now_ms);
  Status MarkFailed(std::int64_t id, std::int64_t next_attempt_ms, const std::string& error);
  // Pending rows past their expiry become 'expired'; *expired counts them.
  Status ExpireOutbox(std::int64_t now_ms, std::int64_t* expired);
  Status CountOutbox(const std::string& channel, OutboxCounts* out);
  // Earliest next_attempt_ms of a pending row of `channel` (nullopt: none).
  Status NextDue(const std::string& channel, std::optional<std::int64_t>* out);

  Status AddRequest(const AlarmRequest& request, std::int64_t* id);
  Status PendingRequests(std::vector<AlarmRequest>* out);
  Status FinishRequest(std::int64_t id, bool done, const std::string& result, std::int64_t now_ms);
  Status GetRequest(std::int64_t id, AlarmRequest* out);

  Status ListAlarms(std::vector<AlarmStateRow>* out);
  Status FindAlarm(const std::string& alarm_id, std::optional<AlarmStateRow>* out);
  // For a restart (AlarmBook::Restore): the alarms left in active_unack,
  // active_ack, cleared_unack or shelved, by alarm id, and the highest `seq`
  // of any stored transition (0 when there is none).
  Status Unfinished(std::vector<RestoredAlarm>* out, std::int64_t* last_seq);
  // Stored transition JSON, oldest first; alarm_id empty = all.
  Status Transitions(const std::string& alarm_id, std::size_t limit, std::vector<std::string>* out);

 private:
  struct Impl;
  explicit AlarmStore(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace heft
