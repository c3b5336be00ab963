// alarm_store.cpp — AlarmStore over the raw sqlite3 C API, bound parameters
// only. Statements are prepared per call (these tables see a few rows a
// second at most, so a statement cache would buy nothing).
#include "io/alarm_store.h"

#include <sqlite3.h>

#include <string_view>
#include <utility>

#include <fmt/core.h>

#include "io/alarm_schema.h"
#include "io/sqlite_store.h"

namespace heft {
namespace {

constexpr int kBusyTimeoutMs = 5000;

// A prepared statement that finalizes itself.
class Stmt {
 public:
  Stmt(sqlite3* db, std::string_view sql) {
    rc_ = sqlite3_prepare_v2(db, sql.data(), static_cast<int>(sql.size()), &stmt_, nullptr);
  }
  ~Stmt() { sqlite3_finalize(stmt_); }
  Stmt(const Stmt&) = delete;
  Stmt& operator=(const Stmt&) = delete;
  bool ok() const { return rc_ == SQLITE_OK; }
  Stmt& Text(int i, std::string_view v) {
    Check(sqlite3_bind_text64(stmt_, i, v.data(), v.size(), SQLITE_TRANSIENT, SQLITE_UTF8));
    return *this;
  }
  Stmt& Int(int i, std::int64_t v) {
    Check(sqlite3_bind_int64(stmt_, i, v));
    return *this;
  }
  Stmt& OptInt(int i, std::optional<std::int64_t> v) {
    Check(v ? sqlite3_bind_int64(stmt_, i, *v) : sqlite3_bind_null(stmt_, i));
    return *this;
  }
  // SQLITE_ROW, SQLITE_DONE or an error code (a bind error counts as one).
  int Step() { return rc_ != SQLITE_OK ? rc_ : sqlite3_step(stmt_); }
  std::string ColText(int c) const {
    const unsigned char* t = sqlite3_column_text(stmt_, c);
    return t == nullptr ? std::string()
                        : std::string(reinterpret_cast<const char*>(t),
                                      static_cast<std::size_t>(sqlite3_column_bytes(stmt_, c)));
  }
  std::int64_t ColInt(int c) const { return sqlite3_column_int64(stmt_, c); }
  std::optional<std::int64_t> ColOptInt(int c) const {
    if (sqlite3_column_type(stmt_, c) == SQLITE_NULL) return std::nullopt;
    return sqlite3_column_int64(stmt_, c);
  }

 private:
  void Check(int rc) {
    if (rc_ == SQLITE_OK && rc != SQLITE_OK) rc_ = rc;
  }
  sqlite3_stmt* stmt_ = nullptr;
  int rc_ = SQLITE_OK;
};

}  // namespace

struct AlarmStore::Impl {
  std::string path;
  sqlite3* db = nullptr;
  ~Impl() {
    if (db != nullptr) sqlite3_close_v2(db);
  }
  Status Error(std::string_view op) const {
    return Status::Error(fmt::format("{}: {}: {} (code {})", path, op,
                                     db ? sqlite3_errmsg(db) : "out of memory",
                                     db ? sqlite3_extended_errcode(db) : 0));
  }
  Status Exec(const char* sql, std::string_view op) {
    if (sqlite3_exec(db, sql, nullptr, nullptr, nullptr) != SQLITE_OK) return Error(op);
    return Status::Ok();
  }
};

AlarmStore::AlarmStore(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
AlarmStore::~AlarmStore() = default;

Status AlarmStore::Open(const std::string& path, Mode mode, std::unique_ptr<AlarmStore>* out) {
  out->reset();
  {
    // Creates and migrates the file (or checks it, read-only) like heftd does.
    std::unique_ptr<SqliteStore> store;
    const auto store_mode =
        mode == Mode::kReadOnly ? SqliteStore::Mode::kReadOnly : SqliteStore::Mode::kReadWrite;
    if (Status s = SqliteStore::Open(path, store_mode, &store); !s.ok()) return s;
    if (store->schema_version() < kAlarmSchemaVersion) {
      return Status::Error(fmt::format(
          "{}: database schema version {} has no alarm tables (version {} adds them; open it "
          "once with heftd or a read-write heft command to migrate)",
          path, store->schema_version(), kAlarmSchemaVersion));
    }
  }
  auto impl = std::make_unique<Impl>();
  impl->path = path;
  const int flags = (mode == Mode::kReadOnly ? SQLITE_OPEN_READONLY : SQLITE_OPEN_READWRITE) |
                    SQLITE_OPEN_NOMUTEX;
  if (sqlite3_open_v2(path.c_str(), &impl->db, flags, nullptr) != SQLITE_OK) {
    return impl->Error("opening for alarms");
  }
  sqlite3_extended_result_codes(impl->db, 1);
  sqlite3_busy_timeout(impl->db, kBusyTimeoutMs);
  if (mode == Mode::kReadWrite) {
    if (Status s = impl->Exec("PRAGMA synchronous = NORMAL", "setting synchronous"); !s.ok())
      return s;
  }
  out->reset(new AlarmStore(std::move(impl)));
  return Status::Ok();
}

Status AlarmStore::Record(const std::vector<TransitionRecord>& records, std::int64_t now_ms) {
  constexpr std::string_view kOp = "recording alarm transitions";
  if (records.empty()) return Status::Ok();
  if (Status s = impl_->Exec("BEGIN IMMEDIATE", kOp); !s.ok()) return s;
  auto fail = [&](std::string_view what) {
    Status s = impl_->Error(fmt::format("{}: {}", kOp, what));
    sqlite3_exec(impl_->db, "ROLLBACK", nullptr, nullptr, nullptr);
    return s;
  };
  for (const TransitionRecord& r : records) {
    const AlarmTransition& t = r.transition;
    std::optional<std::int64_t> head;
    if (t.head) head = *t.head;
    {
      Stmt st(impl_->db,
              "INSERT OR IGNORE INTO alarm_transitions(event_id, alarm_id, line, area, kind, head, "
              "from_state, to_state, priority, at_ms, cause, who, why, note, annunciated, message, "
              "json) VALUES (?1,?2,?3,?4,?5,?6,?7,?8,?9,?10,?11,?12,?13,?14,?15,?16,?17)");
      st.Text(1, t.event_id).Text(2, t.alarm_id).Text(3, t.line).Text(4, t.area).Text(5, t.kind);
      st.OptInt(6, head).Text(7, AlarmStateName(t.from)).Text(8, AlarmStateName(t.to));
      st.Text(9, AlarmPriorityName(t.priority))
          .Int(10, t.time_ms)
          .Text(11, AlarmCauseName(t.cause));
      st.Text(12, t.who).Text(13, t.why).Text(14, t.note).Int(15, t.annunciate ? 1 : 0);
      st.Text(16, t.message).Text(17, r.json);
      if (st.Step() != SQLITE_DONE) return fail("transition " + t.event_id);
      if (sqlite3_changes(impl_->db) == 0) continue;  // stored before: nothing more to do
    }
    {
      Stmt st(
          impl_->db,
          "INSERT INTO alarm_state(alarm_id, line, area, kind, head, state, priority, since_ms, "
          "shelved_until_ms, last_event_id, message) VALUES (?1,?2,?3,?4,?5,?6,?7,?8,?9,?10,?11) "
          "ON CONFLICT(alarm_id) DO UPDATE SET state = excluded.state, priority = "
          "excluded.priority, since_ms = excluded.since_ms, shelved_until_ms = "
          "excluded.shelved_until_ms, last_event_id = excluded.last_event_id, message = "
          "excluded.message");
      st.Text(1, t.alarm_id).Text(2, t.line).Text(3, t.area).Text(4, t.kind).OptInt(5, head);
      st.Text(6, AlarmStateName(t.to)).Text(7, AlarmPriorityName(t.priority)).Int(8, t.time_ms);
      st.OptInt(9, t.shelved_until_ms).Text(10, t.event_id).Text(11, t.message);
      if (st.Step() != SQLITE_DONE) return fail("state of " + t.alarm_id);
    }
    for (const std::string& channel : r.channels) {
      Stmt st(impl_->db,
              "INSERT OR IGNORE INTO alarm_outbox(event_id, channel, payload, created_ms, "
              "expires_ms, next_attempt_ms) VALUES (?1,?2,?3,?4,?5,?4)");
      st.Text(1, t.event_id).Text(2, channel).Text(3, r.json).Int(4, now_ms).Int(5, r.expires_ms);
      if (st.Step() != SQLITE_DONE) return fail("outbox row for " + channel);
    }
  }
  if (sqlite3_exec(impl_->db, "COMMIT", nullptr, nullptr, nullptr) != SQLITE_OK) {
    return fail("commit");
  }
  return Status::Ok();
}

Status AlarmStore::PendingOutbox(const std::string& channel, int limit,
                                 std::vector<OutboxItem>* out) {
  out->clear();
  Stmt st(impl_->db,
          "SELECT id, event_id, channel, payload, created_ms, expires_ms, attempts, "
          "next_attempt_ms FROM alarm_outbox WHERE channel = ?1 AND status = 'pending' "
          "ORDER BY id LIMIT ?2");
  st.Text(1, channel).Int(2, limit);
  int rc;
  while ((rc = st.Step()) == SQLITE_ROW) {
    OutboxItem item;
    item.id = st.ColInt(0);
    item.event_id = st.ColText(1);
    item.channel = st.ColText(2);
    item.payload = st.ColText(3);
    item.created_ms = st.ColInt(4);
    item.expires_ms = st.ColInt(5);
    item.attempts = static_cast<int>(st.ColInt(6));
    item.next_attempt_ms = st.ColInt(7);
    out->push_back(std::move(item));
  }
  if (rc != SQLITE_DONE) return impl_->Error("reading the outbox");
  return Status::Ok();
}

Status AlarmStore::MarkDelivered(std::int64_t id, std::int64_t now_ms) {
  Stmt st(impl_->db,
          "UPDATE alarm_outbox SET status = 'delivered', attempts = attempts + 1, done_ms = ?2, "
          "last_error = '' WHERE id = ?1");
  st.Int(1, id).Int(2, now_ms);
  if (st.Step() != SQLITE_DONE) return impl_->Error("marking a delivery done");
  return Status::Ok();
}

Status AlarmStore::MarkFailed(std::int64_t id, std::int64_t next_attempt_ms,
                              const std::string& error) {
  Stmt st(impl_->db,
          "UPDATE alarm_outbox SET attempts = attempts + 1, next_attempt_ms = ?2, last_error = ?3 "
          "WHERE id = ?1");
  st.Int(1, id).Int(2, next_attempt_ms).Text(3, error);
  if (st.Step() != SQLITE_DONE) return impl_->Error("marking a delivery failed");
  return Status::Ok();
}

Status AlarmStore::ExpireOutbox(std::int64_t now_ms, std::int64_t* expired) {
  Stmt st(impl_->db,
          "UPDATE alarm_outbox SET status = 'expired', done_ms = ?1 WHERE status = 'pending' AND "
          "expires_ms <= ?1");
  st.Int(1, now_ms);
  if (st.Step() != SQLITE_DONE) return impl_->Error("expiring the outbox");
  if (expired != nullptr) *expired = sqlite3_changes(impl_->db);
  return Status::Ok();
}

Status AlarmStore::CountOutbox(const std::string& channel, OutboxCounts* out) {
  *out = {};
  Stmt st(impl_->db,
          "SELECT status, count(*) FROM alarm_outbox WHERE channel = ?1 GROUP BY status");
  st.Text(1, channel);
  int rc;
  while ((rc = st.Step()) == SQLITE_ROW) {
    const std::string status = st.ColText(0);
    const std::int64_t n = st.ColInt(1);
    if (status == "pending") out->pending = n;
    if (status == "delivered") out->delivered = n;
    if (status == "expired") out->expired = n;
  }
  if (rc != SQLITE_DONE) return impl_->Error("counting the outbox");
  return Status::Ok();
}

Status AlarmStore::NextDue(const std::string& channel, std::optional<std::int64_t>* out) {
  Stmt st(impl_->db,
          "SELECT min(next_attempt_ms) FROM alarm_outbox WHERE channel = ?1 AND status = "
          "'pending'");
  st.Text(1, channel);
  if (st.Step() != SQLITE_ROW) return impl_->Error("reading the outbox");
  *out = st.ColOptInt(0);
  return Status::Ok();
}

Status AlarmStore::AddRequest(const AlarmRequest& r, std::int64_t* id) {
  Stmt st(impl_->db,
          "INSERT INTO alarm_requests(action, alarm_id, who, note, shelve_ms, requested_ms) VALUES "
          "(?1,?2,?3,?4,?5,?6)");
  st.Text(1, r.action).Text(2, r.alarm_id).Text(3, r.who).Text(4, r.note);
  st.OptInt(5, r.shelve_ms).Int(6, r.requested_ms);
  if (st.Step() != SQLITE_DONE) return impl_->Error("adding an operator request");
  if (id != nullptr) *id = sqlite3_last_insert_rowid(impl_->db);
  return Status::Ok();
}

namespace {
constexpr const char* kRequestColumns =
    "SELECT id, action, alarm_id, who, note, shelve_ms, requested_ms, status, result FROM "
    "alarm_requests ";
AlarmRequest ReadRequest(const Stmt& st) {
  AlarmRequest r;
  r.id = st.ColInt(0);
  r.action = st.ColText(1);
  r.alarm_id = st.ColText(2);
  r.who = st.ColText(3);
  r.note = st.ColText(4);
  r.shelve_ms = st.ColOptInt(5);
  r.requested_ms = st.ColInt(6);
  r.status = st.ColText(7);
  r.result = st.ColText(8);
  return r;
}
}  // namespace

Status AlarmStore::PendingRequests(std::vector<AlarmRequest>* out) {
  out->clear();
  Stmt st(impl_->db, std::string(kRequestColumns) + "WHERE status = 'pending' ORDER BY id");
  int rc;
  while ((rc = st.Step()) == SQLITE_ROW) out->push_back(ReadRequest(st));
  if (rc != SQLITE_DONE) return impl_->Error("reading operator requests");
  return Status::Ok();
}

Status AlarmStore::GetRequest(std::int64_t id, AlarmRequest* out) {
  Stmt st(impl_->db, std::string(kRequestColumns) + "WHERE id = ?1");
  st.Int(1, id);
  const int rc = st.Step();
  if (rc == SQLITE_DONE) return Status::Error(fmt::format("{}: no request {}", impl_->path, id));
  if (rc != SQLITE_ROW) return impl_->Error("reading an operator request");
  *out = ReadRequest(st);
  return Status::Ok();
}

Status AlarmStore::FinishRequest(std::int64_t id, bool done, const std::string& result,
                                 std::int64_t now_ms) {
  Stmt st(impl_->db,
          "UPDATE alarm_requests SET status = ?2, result = ?3, done_ms = ?4 WHERE id = ?1");
  st.Int(1, id).Text(2, done ? "done" : "refused").Text(3, result).Int(4, now_ms);
  if (st.Step() != SQLITE_DONE) return impl_->Error("finishing an operator request");
  return Status::Ok();
}

namespace {
constexpr const char* kStateColumns =
    "SELECT alarm_id, line, area, kind, head, state, priority, since_ms, shelved_until_ms, "
    "last_event_id, message FROM alarm_state ";
AlarmStateRow ReadState(const Stmt& st) {
  AlarmStateRow r;
  r.alarm_id = st.ColText(0);
  r.line = st.ColText(1);
  r.area = st.ColText(2);
  r.kind = st.ColText(3);
  if (auto h = st.ColOptInt(4)) r.head = static_cast<int>(*h);
  r.state = st.ColText(5);
  r.priority = st.ColText(6);
  r.since_ms = st.ColInt(7);
  r.shelved_until_ms = st.ColOptInt(8);
  r.last_event_id = st.ColText(9);
  r.message = st.ColText(10);
  return r;
}
}  // namespace

Status AlarmStore::ListAlarms(std::vector<AlarmStateRow>* out) {
  out->clear();
  Stmt st(impl_->db, std::string(kStateColumns) + "ORDER BY alarm_id");
  int rc;
  while ((rc = st.Step()) == SQLITE_ROW) out->push_back(ReadState(st));
  if (rc != SQLITE_DONE) return impl_->Error("listing alarms");
  return Status::Ok();
}

Status AlarmStore::FindAlarm(const std::string& alarm_id, std::optional<AlarmStateRow>* out) {
  out->reset();
  Stmt st(impl_->db, std::string(kStateColumns) + "WHERE alarm_id = ?1");
  st.Text(1, alarm_id);
  const int rc = st.Step();
  if (rc == SQLITE_ROW) *out = ReadState(st);
  if (rc != SQLITE_ROW && rc != SQLITE_DONE) return impl_->Error("reading an alarm");
  return Status::Ok();
}

Status AlarmStore::Unfinished(std::vector<RestoredAlarm>* out, std::int64_t* last_seq) {
  out->clear();
  *last_seq = 0;
  {
    // The state a shelved alarm was shelved from is on its latest transition.
    Stmt st(impl_->db,
            "SELECT s.alarm_id, s.line, s.area, s.kind, s.head, s.state, s.priority, s.since_ms, "
            "s.shelved_until_ms, t.from_state FROM alarm_state s LEFT JOIN alarm_transitions t "
            "ON t.event_id = s.last_event_id WHERE s.state IN ('active_unack', 'active_ack', "
            "'cleared_unack', 'shelved') ORDER BY s.alarm_id");
    int rc;
    while ((rc = st.Step()) == SQLITE_ROW) {
      RestoredAlarm r;
      r.alarm_id = st.ColText(0);
      r.line = st.ColText(1);
      r.area = st.ColText(2);
      r.kind = st.ColText(3);
      if (auto h = st.ColOptInt(4)) r.head = static_cast<int>(*h);
      const auto state = AlarmStateFromName(st.ColText(5));
      const auto priority = AlarmPriorityFromName(st.ColText(6));
      if (!state || !priority) {
        return Status::Error(
            fmt::format("{}: alarm_state of {}: unknown state \"{}\" or "
                        "priority \"{}\"",
                        impl_->path, r.alarm_id, st.ColText(5), st.ColText(6)));
      }
      r.state = *state;
      r.priority = *priority;
      r.since_ms = st.ColInt(7);
      r.shelved_until_ms = st.ColOptInt(8);
      const auto from = AlarmStateFromName(st.ColText(9));
      r.shelved_while_active = from && IsActive(*from);
      out->push_back(std::move(r));
    }
    if (rc != SQLITE_DONE) return impl_->Error("reading unfinished alarms");
  }
  Stmt st(impl_->db,
          "SELECT max(CAST(json_extract(json, '$.seq') AS INTEGER)) FROM alarm_transitions");
  if (st.Step() != SQLITE_ROW) return impl_->Error("reading the last alarm sequence number");
  *last_seq = st.ColOptInt(0).value_or(0);
  return Status::Ok();
}

Status AlarmStore::Transitions(const std::string& alarm_id, std::size_t limit,
                               std::vector<std::string>* out) {
  out->clear();
  std::string sql = "SELECT json FROM alarm_transitions";
  if (!alarm_id.empty()) sql += " WHERE alarm_id = ?1";
  sql += " ORDER BY id";
  if (limit > 0) sql += " LIMIT ?2";
  Stmt st(impl_->db, sql);
  if (!alarm_id.empty()) st.Text(1, alarm_id);
  if (limit > 0) st.Int(2, static_cast<std::int64_t>(limit));
  int rc;
  while ((rc = st.Step()) == SQLITE_ROW) out->push_back(st.ColText(0));
  if (rc != SQLITE_DONE) return impl_->Error("reading alarm transitions");
  return Status::Ok();
}

}  // namespace heft
