// export_command.cpp — `heft export`: one line's raw packs over a time range as
// native CSV (time,line,head,weight,status), read-only while heftd writes.
// The output can be fed back through `heft replay`.
#include <memory>
#include <ostream>
#include <string>
#include <vector>

#include <fmt/core.h>

#include "command.h"
#include "core/record/native_record.h"
#include "history_cli.h"
#include "io/history_queries.h"

namespace heft::cli {
namespace {

constexpr const char* kUsage =
    "usage: heft export --db FILE --line L [--from T] [--to T]\n"
    "\n"
    "Writes the stored packs of line L as native CSV (time,line,head,weight,status;\n"
    "times ISO-8601 UTC, weights in grams), oldest first, to standard output.\n"
    "The database is opened read-only; heftd may keep writing.\n"
    "  T is ISO-8601 UTC (2026-03-02T06:00:00Z) or epoch milliseconds.\n";

int Fail(std::ostream& err, const std::string& message) {
  err << "heft export: " << message << "\n";
  return 2;
}

int RunExport(const Args& args, std::ostream& out, std::ostream& err) {
  HistoryOptions options;
  if (auto done = ReadHistoryArgs(args, "export", kUsage, true, out, err, &options)) return *done;
  if (options.format == OutputFormat::kJson) return Fail(err, "export writes native CSV only");
  std::unique_ptr<HistoryReader> history;
  if (Status s = HistoryReader::Open(options.db, &history); !s.ok()) return Fail(err, s.message());
  std::vector<HistorySample> samples;
  if (Status s = history->Samples({options.line, options.from_ms, options.to_ms, 0}, &samples);
      !s.ok()) {
    return Fail(err, s.message());
  }
  out << "time,line,head,weight,status\n";
  static constexpr const char* kStatus[] = {"ok", "reject", "error"};
  for (const HistorySample& s : samples) {
    char time[32];
    FormatTimeMs(s.time_ms, time);
    out << time << ',' << options.line << ','
        << (s.head >= 0 ? std::to_string(s.head) : std::string()) << ','
        << fmt::format("{}", s.grams) << ','
        << kStatus[s.status >= 0 && s.status <= 2 ? s.status : 0] << '\n';
  }
  out.flush();
  return out ? 0 : 2;
}

}  // namespace

HEFT_COMMAND("export", "one line's raw packs as native CSV from a heft database", RunExport);

}  // namespace heft::cli
