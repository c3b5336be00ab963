// history_cli.h — what `heft summary`, `heft export`, `heft lines` and
// `heft report` share: the common options (--db, --line, --from, --to,
// --format, --local, --rules), time parsing and display, the rule-table
// search, and table/CSV output.
//
// Tool-side only (arguments and streams); the queries themselves live in
// io/history_queries. Not thread-safe (plain functions on the caller's data).
#pragma once

#include <cstdint>
#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

#include "command.h"

namespace heft::cli {

struct HistoryOptions {
  std::string db;
  std::string line;
  std::optional<std::int64_t> from_ms, to_ms;
  OutputFormat format = OutputFormat::kTable;
  bool local = false;
  std::string rules;  // --rules as given (file or name)
};

// Tries the common options at the reader's position; returns true if one was
// taken. On a bad value returns true and sets *error.
bool TakeHistoryOption(ArgReader& reader, HistoryOptions* options, std::string* error);

// Reads all of `args` as history options for `heft COMMAND`. Returns nullopt
// when the command should go on, else its exit code: 0 after printing `usage`
// for --help, 2 after printing a one-line reason (unknown argument, bad value,
// missing --db, or missing --line when `need_line`).
std::optional<int> ReadHistoryArgs(const Args& args, const char* command, const char* usage,
                                   bool need_line, std::ostream& out, std::ostream& err,
                                   HistoryOptions* options);

// The display zone: UTC, or the machine's local offset now (--local). A fixed
// offset is used for the whole output; a range crossing a daylight-saving
// change shows the offset in force when the command ran.
int DisplayOffsetMinutes(bool local);
std::string ZoneName(bool local);  // "UTC" or "local (UTC+01:00)"
// "2026-03-02 06:00:00.094" in the display zone; ISO-8601 with Z for UTC when `iso`.
std::string DisplayTime(std::int64_t time_ms, bool local, bool iso = false);

// The rule table for `given` (file path, or name under config/rules);
// empty string when none is found.
std::string FindRulesFile(const std::string& given);

// Aligned text table: numeric columns (by index) right-aligned.
void WriteTable(std::ostream& out, const std::vector<std::string>& header,
                const std::vector<std::vector<std::string>>& rows,
                const std::vector<bool>& numeric);
// RFC 4180 CSV.
std::string CsvField(const std::string& text);
void WriteCsv(std::ostream& out, const std::vector<std::string>& header,
              const std::vector<std::vector<std::string>>& rows);

}  // namespace heft::cli
