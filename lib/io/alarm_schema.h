// alarm_schema.h — the SQL of schema version 4: alarm transitions, the
// delivery outbox, operator requests and the current state of each alarm.
//
// Applied by SqliteStore's migration list (entry 4); kept here beside the
// AlarmStore that reads and writes these tables. Never edit after release:
// add a new migration instead.
#pragma once

namespace heft {

inline constexpr int kAlarmSchemaVersion = 4;

inline constexpr const char* kAlarmSchemaSql = R"sql(
CREATE TABLE alarm_transitions (
  id          INTEGER PRIMARY KEY,
  event_id    TEXT NOT NULL UNIQUE,
  alarm_id    TEXT NOT NULL,
  line        TEXT NOT NULL DEFAULT '',
  area        TEXT NOT NULL DEFAULT '',
  kind        TEXT NOT NULL,
  head        INTEGER,
  from_state  TEXT NOT NULL,
  to_state    TEXT NOT NULL,
  priority    TEXT NOT NULL CHECK (priority IN ('low', 'medium', 'high')),
  at_ms       INTEGER NOT NULL,
  cause       TEXT NOT NULL CHECK (cause IN ('process', 'operator', 'system')),
  who         TEXT NOT NULL,
  why         TEXT NOT NULL,
  note        TEXT NOT NULL DEFAULT '',
  annunciated INTEGER NOT NULL,
  message     TEXT NOT NULL DEFAULT '',
  json        TEXT NOT NULL
);
CREATE INDEX alarm_transitions_alarm ON alarm_transitions(alarm_id, id);
CREATE INDEX alarm_transitions_at ON alarm_transitions(at_ms);
CREATE TABLE alarm_outbox (
  id              INTEGER PRIMARY KEY,
  event_id        TEXT NOT NULL,
  channel         TEXT NOT NULL,
  payload         TEXT NOT NULL,
  created_ms      INTEGER NOT NULL,
  expires_ms      INTEGER NOT NULL,
  next_attempt_ms INTEGER NOT NULL,
  attempts        INTEGER NOT NULL DEFAULT 0,
  status          TEXT NOT NULL DEFAULT 'pending'
                  CHECK (status IN ('pending', 'delivered', 'expired')),
  last_error      TEXT NOT NULL DEFAULT '',
  done_ms         INTEGER,
  UNIQUE (event_id, channel)
);
CREATE INDEX alarm_outbox_due ON alarm_outbox(channel, status, next_attempt_ms);
CREATE TABLE alarm_requests (
  id           INTEGER PRIMARY KEY,
  action       TEXT NOT NULL CHECK (action IN ('ack', 'shelve', 'unshelve')),
  alarm_id     TEXT NOT NULL,
  who          TEXT NOT NULL,
  note         TEXT NOT NULL DEFAULT '',
  shelve_ms    INTEGER,
  requested_ms INTEGER NOT NULL,
  status       TEXT NOT NULL DEFAULT 'pending' CHECK (status IN ('pending', 'done', 'refused')),
  result       TEXT NOT NULL DEFAULT '',
  done_ms      INTEGER
);
CREATE INDEX alarm_requests_pending ON alarm_requests(status, id);
CREATE TABLE alarm_state (
  alarm_id         TEXT PRIMARY KEY,
  line             TEXT NOT NULL DEFAULT '',
  area             TEXT NOT NULL DEFAULT '',
  kind             TEXT NOT NULL,
  head             INTEGER,
  state            TEXT NOT NULL,
  priority         TEXT NOT NULL,
  since_ms         INTEGER NOT NULL,
  shelved_until_ms INTEGER,
  last_event_id    TEXT NOT NULL,
  message          TEXT NOT NULL DEFAULT ''
);
)sql";

}  // namespace heft
