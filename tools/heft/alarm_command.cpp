// alarm_command.cpp — `heft ack|shelve|unshelve ALARM` and `heft alarms`.
//
// Safe while heftd runs: an operator action is written as a request row
// (alarm_requests) in one short transaction; heftd applies it on its next
// housekeeping tick (about once a second) through its AlarmBook, stores the
// transition, and marks the request done or refused. The command waits for
// that answer (--wait, default 5 s) and prints it. Requests left when no
// heftd runs are applied (or refused) when it next starts.
#include <charconv>
#include <chrono>
#include <cstdlib>
#include <iomanip>
#include <memory>
#include <ostream>
#include <string>
#include <thread>

#include <fmt/format.h>

#include "command.h"
#include "core/alarm/alarm_types.h"
#include "core/record/native_record.h"
#include "io/alarm_store.h"

namespace heft::cli {
namespace {

constexpr const char* kActionUsage =
    "usage: heft ack|shelve|unshelve ALARM --db FILE [--by NAME] [--note TEXT]\n"
    "                                     [--for DURATION] [--wait SECONDS]\n"
    "\n"
    "Acknowledges, shelves or unshelves an alarm of a running heftd. ALARM is an\n"
    "alarm id as `heft alarms` lists it, e.g. oats-1:drift or oats-1:shift:h3.\n"
    "The request is stored in the database and applied by heftd on its next tick.\n"
    "\n"
    "  --db FILE        the database heftd writes (required)\n"
    "  --by NAME        who does it (default: $USER)\n"
    "  --note TEXT      why (kept in the alarm history)\n"
    "  --for DURATION   shelve only: how long, e.g. 900s, 30m, 2h (default: the\n"
    "                   configured alerting.shelve_default_s; at most shelve_max_s)\n"
    "  --wait SECONDS   how long to wait for heftd's answer (default 5; 0 = do not wait)\n"
    "\n"
    "Exit status: 0 applied (or queued with --wait 0 or no answer in time), 1 refused\n"
    "by heftd (e.g. nothing to acknowledge), 2 usage or database error.\n";

constexpr const char* kListUsage =
    "usage: heft alarms --db FILE [--history [ALARM]] [--limit N]\n"
    "\n"
    "Without --history: the current state of every alarm heftd has seen.\n"
    "With --history: stored alarm transitions as JSON lines (schema in README),\n"
    "oldest first, all of them or those of one ALARM.\n";

int Fail(std::ostream& err, std::string_view command, std::string_view message) {
  err << "heft " << command << ": " << message << "\n";
  return 2;
}

std::optional<std::int64_t> ParseDurationMs(const std::string& text) {
  if (text.empty()) return std::nullopt;
  std::int64_t scale = 1000;
  std::string digits = text;
  const char unit = text.back();
  if (unit == 's' || unit == 'm' || unit == 'h') {
    scale = unit == 's' ? 1000 : unit == 'm' ? 60'000 : 3'600'000;
    digits.pop_back();
  }
  std::int64_t value = 0;
  const auto [end, ec] = std::from_chars(digits.data(), digits.data() + digits.size(), value);
  if (digits.empty() || ec != std::errc() || end != digits.data() + digits.size() || value <= 0 ||
      value > 365LL * 24 * 3600) {
    return std::nullopt;
  }
  return value * scale;
}

std::int64_t NowMs() {
  return std::chrono::duration_cast<std::chrono::milliseconds>(
             std::chrono::system_clock::now().time_since_epoch())
      .count();
}

int RunAction(const std::string& action, const std::string& command, const Args& args,
              std::ostream& out, std::ostream& err) {
  ArgReader reader(args);
  std::string db, alarm, note, for_text, wait_text;
  const char* user = std::getenv("USER");
  std::string by = user != nullptr && *user != '\0' ? user : "operator";
  while (!reader.Done()) {
    std::string value;
    if (reader.Flag("--help") || reader.Flag("-h")) {
      out << kActionUsage;
      return 0;
    } else if (reader.Option("--db", &value)) {
      db = value;
    } else if (reader.Option("--by", &value)) {
      by = value;
    } else if (reader.Option("--note", &value)) {
      note = value;
    } else if (reader.Option("--for", &value)) {
      for_text = value;
    } else if (reader.Option("--wait", &value)) {
      wait_text = value;
    } else if (!reader.error.empty()) {
      return Fail(err, command, reader.error);
    } else if (alarm.empty() && reader.Peek().rfind("--", 0) != 0) {
      alarm = reader.Take();
    } else {
      return Fail(err, command, "unexpected argument '" + reader.Peek() + "' (see --help)");
    }
  }
  if (alarm.empty()) return Fail(err, command, "which alarm? (e.g. oats-1:drift; see heft alarms)");
  if (db.empty()) return Fail(err, command, "--db FILE is required");
  if (by.empty()) return Fail(err, command, "--by must not be empty");
  AlarmRequest request;
  request.action = action;
  request.alarm_id = alarm;
  request.who = by;
  request.note = note;
  if (!for_text.empty()) {
    if (action != "shelve") return Fail(err, command, "--for is only for shelve");
    request.shelve_ms = ParseDurationMs(for_text);
    if (!request.shelve_ms) {
      return Fail(err, command, "--for '" + for_text + "' is not a duration like 900s, 30m or 2h");
    }
  }
  double wait_s = 5.0;
  if (!wait_text.empty()) {
    char* end = nullptr;
    wait_s = std::strtod(wait_text.c_str(), &end);
    if (end == wait_text.c_str() || *end != '\0' || !(wait_s >= 0.0) || wait_s > 600.0) {
      return Fail(err, command, "--wait '" + wait_text + "' is not a number of seconds 0..600");
    }
  }
  std::unique_ptr<AlarmStore> store;
  if (Status s = AlarmStore::Open(db, AlarmStore::Mode::kReadWrite, &store); !s.ok()) {
    return Fail(err, command, s.message());
  }
  std::optional<AlarmStateRow> known;
  if (Status s = store->FindAlarm(alarm, &known); !s.ok()) return Fail(err, command, s.message());
  if (!known) {
    return Fail(
        err, command,
        "no alarm \"" + alarm + "\" in " + db + " (heft alarms --db " + db + " lists them)");
  }
  request.requested_ms = NowMs();
  std::int64_t id = 0;
  if (Status s = store->AddRequest(request, &id); !s.ok()) return Fail(err, command, s.message());
  const auto deadline = std::chrono::steady_clock::now() +
                        std::chrono::milliseconds(static_cast<std::int64_t>(wait_s * 1000));
  while (std::chrono::steady_clock::now() < deadline) {
    AlarmRequest answer;
    if (Status s = store->GetRequest(id, &answer); !s.ok()) return Fail(err, command, s.message());
    if (answer.status == "done") {
      out << command << " " << alarm << ": " << answer.result << "\n";
      return 0;
    }
    if (answer.status == "refused") {
      err << "heft " << command << ": refused by heftd: " << answer.result << "\n";
      return 1;
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(100));
  }
  out << command << " " << alarm << ": queued as request " << id
      << (wait_s > 0 ? "; heftd did not answer yet (it applies requests when it runs)" : "")
      << "\n";
  return 0;
}

int RunAck(const Args& a, std::ostream& o, std::ostream& e) {
  return RunAction("ack", "ack", a, o, e);
}
int RunShelve(const Args& a, std::ostream& o, std::ostream& e) {
  return RunAction("shelve", "shelve", a, o, e);
}
int RunUnshelve(const Args& a, std::ostream& o, std::ostream& e) {
  return RunAction("unshelve", "unshelve", a, o, e);
}

std::string Time(std::int64_t ms) {
  char buffer[32];
  FormatTimeMs(ms, buffer);
  return buffer;
}

int RunAlarms(const Args& args, std::ostream& out, std::ostream& err) {
  ArgReader reader(args);
  std::string db, limit_text, history_alarm;
  bool history = false;
  while (!reader.Done()) {
    std::string value;
    if (reader.Flag("--help") || reader.Flag("-h")) {
      out << kListUsage;
      return 0;
    } else if (reader.Option("--db", &value)) {
      db = value;
    } else if (reader.Option("--limit", &value)) {
      limit_text = value;
    } else if (reader.Flag("--history")) {
      history = true;
      if (!reader.Done() && reader.Peek().rfind("--", 0) != 0) history_alarm = reader.Take();
    } else if (!reader.error.empty()) {
      return Fail(err, "alarms", reader.error);
    } else {
      return Fail(err, "alarms", "unexpected argument '" + reader.Peek() + "' (see --help)");
    }
  }
  if (db.empty()) return Fail(err, "alarms", "--db FILE is required");
  std::size_t limit = 0;
  if (!limit_text.empty()) {
    const auto [end, ec] =
        std::from_chars(limit_text.data(), limit_text.data() + limit_text.size(), limit);
    if (ec != std::errc() || end != limit_text.data() + limit_text.size()) {
      return Fail(err, "alarms", "--limit '" + limit_text + "' is not a whole number");
    }
  }
  std::unique_ptr<AlarmStore> store;
  if (Status s = AlarmStore::Open(db, AlarmStore::Mode::kReadOnly, &store); !s.ok()) {
    return Fail(err, "alarms", s.message());
  }
  if (history) {
    std::vector<std::string> rows;
    if (Status s = store->Transitions(history_alarm, limit, &rows); !s.ok()) {
      return Fail(err, "alarms", s.message());
    }
    for (const std::string& row : rows) out << row << "\n";
    return out ? 0 : 2;
  }
  std::vector<AlarmStateRow> rows;
  if (Status s = store->ListAlarms(&rows); !s.ok()) return Fail(err, "alarms", s.message());
  out << fmt::format("{:<24} {:<14} {:<8} {:<24} {}\n", "ALARM", "STATE", "PRIORITY", "SINCE",
                     "MESSAGE");
  for (const AlarmStateRow& r : rows) {
    std::string state = r.state;
    if (r.shelved_until_ms) state += " until " + Time(*r.shelved_until_ms);
    out << fmt::format("{:<24} {:<14} {:<8} {:<24} {}\n", r.alarm_id, state, r.priority,
                       Time(r.since_ms), r.message);
  }
  return out ? 0 : 2;
}

}  // namespace

HEFT_COMMAND("ack", "acknowledge an alarm of a running heftd (by id, see heft alarms)", RunAck);
HEFT_COMMAND("shelve", "shelve an alarm for a while (audited; still evaluated)", RunShelve);
HEFT_COMMAND("unshelve", "unshelve an alarm", RunUnshelve);
HEFT_COMMAND("alarms", "current alarm states, or the alarm history as JSON lines", RunAlarms);

}  // namespace heft::cli
