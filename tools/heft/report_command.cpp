// report_command.cpp — `heft report`: one line's engineer report over a time
// range as a self-contained HTML file, or one chart as an SVG file. Read-only
// on the database; safe while heftd writes.
#include <chrono>
#include <fstream>
#include <memory>
#include <ostream>
#include <string>
#include <vector>

#include "command.h"
#include "core/report/line_report.h"
#include "history_cli.h"
#include "io/history_queries.h"

namespace heft::cli {
namespace {

constexpr const char* kUsage =
    "usage: heft report --db FILE --line L [--from T] [--to T] --out FILE.html\n"
    "       heft report --db FILE --line L [--from T] [--to T] --svg CHART --out FILE.svg\n"
    "\n"
    "Writes one line's report: key figures, run chart, histogram, box plots by head,\n"
    "shift and lot, compliance per lot, giveaway and the event list, as one HTML file\n"
    "with inline SVG and CSS (no script, no network; prints on A4). With --svg, only\n"
    "one chart: run, histogram, boxplot-head, boxplot-lot or boxplot-shift.\n"
    "\n"
    "  --db FILE        the database heftd writes (required)\n"
    "  --line L         the line (required)\n"
    "  --from T, --to T the range (packs at or after --from, before --to);\n"
    "                   ISO-8601 UTC (2026-03-02T06:00:00Z) or epoch milliseconds\n"
    "  --out FILE       where to write (required; '-' = standard output)\n"
    "  --svg CHART      write only this chart as SVG\n"
    "  --rules R        rule table for TNE (default eu-average-quantity)\n"
    "  --shifts LIST    work-shift start times, default 06:00,14:00,22:00\n"
    "  --local          times in the machine's local time (default UTC)\n";

int Fail(std::ostream& err, const std::string& message) {
  err << "heft report: " << message << "\n";
  return 2;
}

int RunReport(const Args& args, std::ostream& out, std::ostream& err) {
  ArgReader reader(args);
  HistoryOptions options;
  std::string out_path, chart_name, shifts_text;
  while (!reader.Done()) {
    std::string error, value;
    if (reader.Flag("--help") || reader.Flag("-h")) {
      out << kUsage;
      return 0;
    }
    if (TakeHistoryOption(reader, &options, &error)) {
      if (!error.empty()) return Fail(err, error);
      continue;
    }
    if (reader.Option("--out", &value)) {
      out_path = value;
    } else if (reader.Option("--svg", &value)) {
      chart_name = value;
    } else if (reader.Option("--shifts", &value)) {
      shifts_text = value;
    } else if (!reader.error.empty()) {
      return Fail(err, reader.error);
    } else {
      return Fail(err, "unexpected argument '" + reader.Peek() + "' (see heft report --help)");
    }
  }
  if (options.db.empty()) return Fail(err, "--db FILE is required (see heft report --help)");
  if (options.line.empty()) return Fail(err, "--line L is required (see heft report --help)");
  if (out_path.empty()) return Fail(err, "--out FILE is required (see heft report --help)");
  std::optional<ReportChart> chart;
  if (!chart_name.empty()) {
    chart = ReportChartFromName(chart_name);
    if (!chart) {
      return Fail(err, "unknown chart '" + chart_name +
                           "' (valid: run, histogram, boxplot-head, boxplot-lot, boxplot-shift)");
    }
  }
  ReportInput input;
  if (!shifts_text.empty()) {
    if (Status s = ParseShiftPattern(shifts_text, &input.shifts); !s.ok()) {
      return Fail(err, "--shifts: " + s.message());
    }
  }

  std::unique_ptr<HistoryReader> history;
  if (Status s = HistoryReader::Open(options.db, &history); !s.ok()) return Fail(err, s.message());
  std::optional<HistoryLine> line;
  if (Status s = history->Line(options.line, &line); !s.ok()) return Fail(err, s.message());
  if (Status s =
          history->Samples({options.line, options.from_ms, options.to_ms, 0}, &input.samples);
      !s.ok()) {
    return Fail(err, s.message());
  }
  EventQuery query;
  query.line = options.line;
  query.since_ms = options.from_ms;
  query.until_ms = options.to_ms;
  if (Status s = history->Events(query, &input.events); !s.ok()) return Fail(err, s.message());
  if (!line && input.samples.empty() && input.events.empty()) {
    return Fail(err, "no line '" + options.line + "' in " + options.db);
  }
  if (Status s = history->Lots(options.line, options.from_ms, options.to_ms, &input.lots);
      !s.ok()) {
    return Fail(err, s.message());
  }
  input.line = line.value_or(HistoryLine{options.line, "", std::nullopt, std::nullopt, 0});
  LoadLimitsForLine(FindRulesFile(options.rules), input.line.nominal_g, &input.limits,
                    &input.rules_name, &input.limits_note);
  input.from_ms = options.from_ms;
  input.to_ms = options.to_ms;
  input.offset_minutes = DisplayOffsetMinutes(options.local);
  input.zone_name = ZoneName(options.local);
  input.database = options.db;
  const auto now_ms = std::chrono::duration_cast<std::chrono::milliseconds>(
                          std::chrono::system_clock::now().time_since_epoch())
                          .count();
  input.generated = DisplayTime(now_ms, options.local) + " (" + input.zone_name + ")";

  const std::string text = chart ? RenderReportChart(input, *chart) : RenderReportHtml(input);
  if (out_path == "-") {
    out << text;
    out.flush();
    return out ? 0 : 2;
  }
  std::ofstream file(out_path, std::ios::binary | std::ios::trunc);
  if (!file) return Fail(err, "cannot write " + out_path);
  file << text;
  file.close();
  if (!file) return Fail(err, "error writing " + out_path);
  err << "heft report: wrote " << out_path << " (" << text.size() << " bytes, "
      << input.samples.size() << " packs, " << input.events.size() << " events)\n";
  return 0;
}

}  // namespace

HEFT_COMMAND("report", "one line's report (HTML with charts) or one chart (SVG)", RunReport);

}  // namespace heft::cli
