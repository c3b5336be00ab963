// events_command.cpp — `heft events`: list stored events from a heft database.
//
// Opens the database read-only, so it is safe to run while heftd is writing.
#include <algorithm>
#include <charconv>
#include <cstdint>
#include <memory>
#include <ostream>
#include <string>
#include <string_view>
#include <vector>

#include <fmt/format.h>

#include "command.h"
#include "core/model/finding.h"
#include "core/record/native_record.h"
#include "io/event_json.h"
#include "io/sqlite_store.h"
#include "record_query_cli.h"

namespace heft::cli {
namespace {

constexpr const char* kUsage =
    "usage: heft events --db FILE [--line L] [--kind K] [--since T] [--until T]\n"
    "                   [--limit N] [--format table|csv|json]\n"
    "\n"
    "Lists the events (patterns raised and cleared) stored in a heft database,\n"
    "oldest first. The database is opened read-only; heftd may keep writing.\n"
    "\n"
    "  --db FILE      the database heftd writes (required)\n"
    "  --line L       only events of line L\n"
    "  --kind K       only events of one kind: shift, drift, oscillation, settling,\n"
    "                 spread, stuck, silence, outlier, compliance\n"
    "  --since T      only events whose record time is at or after T\n"
    "  --until T      only events whose record time is before T\n"
    "                 T is ISO-8601 UTC (2026-03-02T06:00:00Z) or epoch milliseconds\n"
    "  --limit N      at most N events (0 = all, the default)\n"
    "  --format F     table (default, for people), csv (with a header) or json\n"
    "                 (one object per line, the same form as `heft replay --events-out`\n"
    "                 plus \"source\" and \"recorded\")\n";

int Fail(std::ostream& err, std::string_view message) {
  err << "heft events: " << message << "\n";
  return 2;
}

std::string ValidKinds() {
  std::string kinds;
  for (int i = 0; i < kFindingKindCount; ++i) {
    if (i > 0) kinds += ", ";
    kinds += KindName(static_cast<FindingKind>(i));
  }
  return kinds;
}

std::string TimeText(std::int64_t time_ms) {
  char buffer[32];
  FormatTimeMs(time_ms, buffer);
  return buffer;
}

std::string Fixed3(const std::optional<double>& value, bool show_sign = false) {
  if (!value) return "";
  return show_sign ? fmt::format("{:+.3f}", *value) : fmt::format("{:.3f}", *value);
}

std::string OptInt(const std::optional<std::int64_t>& value) {
  return value ? std::to_string(*value) : std::string();
}

// Control characters would break the table's rows; show them as spaces.
std::string OneLine(std::string_view text) {
  std::string out(text);
  for (char& c : out) {
    if (static_cast<unsigned char>(c) < 0x20 || c == 0x7f) c = ' ';
  }
  return out;
}

// RFC 4180 quoting: fields with a comma, quote or line break are quoted.
std::string CsvField(std::string_view text) {
  if (text.find_first_of(",\"\r\n") == std::string_view::npos) return std::string(text);
  std::string out = "\"";
  for (char c : text) {
    if (c == '"') out += '"';
    out += c;
  }
  out += '"';
  return out;
}

void WriteTable(const std::vector<EventRow>& rows, std::ostream& out) {
  if (rows.empty()) {
    out << "no events\n";
    return;
  }
  const std::vector<std::string> header = {"time (UTC)", "line",   "event",  "kind",
                                           "severity",   "record", "size g", "message"};
  std::vector<std::vector<std::string>> cells;
  cells.reserve(rows.size());
  for (const EventRow& row : rows) {
    const Finding& f = row.finding;
    std::string time = TimeText(f.at_time_ms);
    std::replace(time.begin(), time.end(), 'T', ' ');
    if (!time.empty() && time.back() == 'Z') time.pop_back();
    cells.push_back({time, f.line, std::string(TransitionName(f.transition)),
                     std::string(KindName(f.kind)), std::string(SeverityName(f.severity)),
                     std::to_string(f.at), Fixed3(f.size_g, true), OneLine(row.message)});
  }
  std::vector<std::size_t> width(header.size());
  for (std::size_t c = 0; c < header.size(); ++c) width[c] = header[c].size();
  for (const auto& line : cells) {
    for (std::size_t c = 0; c < line.size(); ++c) width[c] = std::max(width[c], line[c].size());
  }
  // Numbers right-aligned, text left-aligned; the message column is not padded.
  const auto write_row = [&](const std::vector<std::string>& line) {
    std::string text;
    for (std::size_t c = 0; c < line.size(); ++c) {
      const bool last = c + 1 == line.size();
      const bool numeric = c == 5 || c == 6;
      if (last) {
        text += line[c];
      } else if (numeric) {
        text += std::string(width[c] - line[c].size(), ' ') + line[c] + "  ";
      } else {
        text += line[c] + std::string(width[c] - line[c].size(), ' ') + "  ";
      }
    }
    while (!text.empty() && text.back() == ' ') text.pop_back();
    out << text << "\n";
  };
  write_row(header);
  for (const auto& line : cells) write_row(line);
}

void WriteCsv(const std::vector<EventRow>& rows, std::ostream& out) {
  out << "time,line,event,kind,severity,record_index,onset_index,end_index,size_g,size_sigma,"
         "level_g,period_packs,head,detector,message,source,recorded\n";
  for (const EventRow& row : rows) {
    const Finding& f = row.finding;
    std::optional<std::int64_t> head;
    if (f.head) head = *f.head;
    out << TimeText(f.at_time_ms) << ',' << CsvField(f.line) << ',' << TransitionName(f.transition)
        << ',' << KindName(f.kind) << ',' << SeverityName(f.severity) << ',' << f.at << ','
        << OptInt(f.onset) << ',' << OptInt(f.end) << ',' << Fixed3(f.size_g) << ','
        << Fixed3(f.size_sigma) << ',' << Fixed3(f.level_g) << ',' << Fixed3(f.period_packs) << ','
        << OptInt(head) << ',' << CsvField(f.detector) << ',' << CsvField(row.message) << ','
        << CsvField(row.source) << ',' << TimeText(row.recorded_ms) << "\n";
  }
}

void WriteJson(const std::vector<EventRow>& rows, std::ostream& out) {
  for (const EventRow& row : rows) {
    std::string json = FindingToJson(row.finding, row.message);
    json.pop_back();  // the closing brace; two more fields follow
    json += ",\"source\":";
    AppendJsonString(row.source, &json);
    json += ",\"recorded\":";
    AppendJsonString(TimeText(row.recorded_ms), &json);
    json += "}\n";
    out << json;
  }
}

int RunEvents(const Args& args, std::ostream& out, std::ostream& err) {
  ArgReader reader(args);
  RecordQueryOptions options;
  std::optional<std::string> kind_text;
  while (!reader.Done()) {
    std::string value, problem;
    if (reader.Flag("--help") || reader.Flag("-h")) {
      out << kUsage;
      return 0;
    } else if (TakeRecordQueryOption(reader, &options, &problem)) {
      if (!problem.empty()) return Fail(err, problem);
    } else if (reader.Option("--kind", &value)) {
      kind_text = value;
    } else if (!reader.error.empty()) {
      return Fail(err, reader.error);
    } else {
      return Fail(err, "unexpected argument '" + reader.Peek() + "' (see heft events --help)");
    }
  }
  if (options.db.empty()) return Fail(err, "--db FILE is required (see heft events --help)");

  EventQuery query;
  ApplyRecordQueryOptions(options, &query);
  if (kind_text) {
    query.kind = KindFromName(*kind_text);
    if (!query.kind) {
      return Fail(err, "unknown kind '" + *kind_text + "' (valid: " + ValidKinds() + ")");
    }
  }
  const OutputFormat format = options.format;
  const std::string& db_path = options.db;

  std::unique_ptr<SqliteStore> store;
  if (Status s = SqliteStore::Open(db_path, SqliteStore::Mode::kReadOnly, &store); !s.ok()) {
    return Fail(err, s.message());
  }
  std::vector<EventRow> rows;
  if (Status s = store->QueryEvents(query, &rows); !s.ok()) return Fail(err, s.message());

  switch (format) {
    case OutputFormat::kTable:
      WriteTable(rows, out);
      break;
    case OutputFormat::kCsv:
      WriteCsv(rows, out);
      break;
    case OutputFormat::kJson:
      WriteJson(rows, out);
      break;
  }
  out.flush();
  return out ? 0 : 2;
}

}  // namespace

HEFT_COMMAND("events", "list events stored in a heft database", RunEvents);

}  // namespace heft::cli
