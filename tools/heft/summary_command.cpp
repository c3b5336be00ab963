// summary_command.cpp — `heft summary`: one line's figures over a time range
// from a heft database (read-only; safe while heftd writes).
#include <memory>
#include <ostream>
#include <string>
#include <vector>

#include <fmt/core.h>
#include <nlohmann/json.hpp>

#include "command.h"
#include "core/report/period_summary.h"
#include "history_cli.h"
#include "io/history_queries.h"

namespace heft::cli {
namespace {

constexpr const char* kUsage =
    "usage: heft summary --db FILE --line L [--from T] [--to T] [--rules FILE|NAME]\n"
    "                    [--format table|csv|json] [--local]\n"
    "\n"
    "One line's figures over a time range: packs by state, mean, sd, quartiles,\n"
    "capability against nominal − TNE, giveaway, packs below T1/T2, events.\n"
    "The database is opened read-only; heftd may keep writing.\n"
    "\n"
    "  --db FILE     the database heftd writes (required)\n"
    "  --line L      the line (required)\n"
    "  --from T      packs at or after T; --to T: packs before T\n"
    "                T is ISO-8601 UTC (2026-03-02T06:00:00Z) or epoch milliseconds\n"
    "  --rules R     rule table for TNE (default eu-average-quantity from config/rules)\n"
    "  --format F    table (default), csv (a header and one row) or json\n"
    "  --local       show times in the machine's local time (default UTC)\n"
    "Compliance figures are the packer's own control, not legal verification.\n";

int Fail(std::ostream& err, const std::string& message) {
  err << "heft summary: " << message << "\n";
  return 2;
}

std::string F(double v, int decimals) { return fmt::format("{:.{}f}", v, decimals); }
std::string F(const std::optional<double>& v, int decimals) {
  return v ? F(*v, decimals) : std::string();
}

int RunSummary(const Args& args, std::ostream& out, std::ostream& err) {
  HistoryOptions options;
  if (auto done = ReadHistoryArgs(args, "summary", kUsage, true, out, err, &options)) return *done;

  std::unique_ptr<HistoryReader> history;
  if (Status s = HistoryReader::Open(options.db, &history); !s.ok()) return Fail(err, s.message());
  std::optional<HistoryLine> line;
  if (Status s = history->Line(options.line, &line); !s.ok()) return Fail(err, s.message());
  SampleRange range{options.line, options.from_ms, options.to_ms, 0};
  std::vector<HistorySample> samples;
  if (Status s = history->Samples(range, &samples); !s.ok()) return Fail(err, s.message());
  EventQuery query;
  query.line = options.line;
  query.since_ms = options.from_ms;
  query.until_ms = options.to_ms;
  std::vector<HistoryEvent> events;
  if (Status s = history->Events(query, &events); !s.ok()) return Fail(err, s.message());
  if (!line && samples.empty() && events.empty()) {
    return Fail(err, "no line '" + options.line + "' in " + options.db);
  }
  std::optional<comply::NetContentLimits> limits;
  std::string rules_name, note;
  LoadLimitsForLine(FindRulesFile(options.rules), line ? line->nominal_g : std::nullopt, &limits,
                    &rules_name, &note);
  const PeriodSummary s = SummarizePeriod(samples, events, limits);

  // One list of (key, value) pairs feeds all three formats.
  std::vector<std::pair<std::string, std::string>> rows;
  const auto add = [&](const std::string& key, const std::string& value) {
    rows.emplace_back(key, value);
  };
  add("line", options.line);
  add("from", options.from_ms ? DisplayTime(*options.from_ms, options.local, true) : "");
  add("to", options.to_ms ? DisplayTime(*options.to_ms, options.local, true) : "");
  add("first_pack", s.packs ? DisplayTime(s.first_ms, options.local, true) : "");
  add("last_pack", s.packs ? DisplayTime(s.last_ms, options.local, true) : "");
  add("packs", std::to_string(s.packs));
  add("ok", std::to_string(s.ok));
  add("rejected", std::to_string(s.rejected));
  add("errors", std::to_string(s.errors));
  const bool any = s.stats.count > 0;
  add("mean_g", any ? F(s.stats.mean, 4) : "");
  add("sd_g", any ? F(s.stats.sd, 4) : "");
  add("short_term_sigma_g", any ? F(s.stats.mr_sigma, 4) : "");
  add("min_g", any ? F(s.stats.min, 3) : "");
  add("q1_g", any ? F(s.stats.q1, 4) : "");
  add("median_g", any ? F(s.stats.median, 4) : "");
  add("q3_g", any ? F(s.stats.q3, 4) : "");
  add("max_g", any ? F(s.stats.max, 3) : "");
  add("nominal_g", s.limits ? F(s.limits->nominal_g, 3) : "");
  add("tne_g", s.limits ? F(s.limits->tolerance_g, 3) : "");
  add("t1_g", s.limits ? F(s.limits->t1_g, 3) : "");
  add("t2_g", s.limits ? F(s.limits->t2_g, 3) : "");
  add("cpk", s.capability ? F(s.capability->cpk, 3) : "");
  add("ppk", s.capability ? F(s.capability->ppk, 3) : "");
  add("giveaway_per_pack_g", s.figures ? F(s.figures->giveaway_per_pack_g, 4) : "");
  add("giveaway_total_kg", s.figures ? F(s.figures->giveaway_g / 1000.0, 4) : "");
  add("giveaway_percent", F(s.giveaway_percent, 3));
  add("below_t1", s.figures ? std::to_string(s.figures->t1_count) : "");
  add("below_t2", s.figures ? std::to_string(s.figures->t2_count) : "");
  add("events_raised", std::to_string(s.raised));
  add("events_cleared", std::to_string(s.cleared));
  for (int k = 0; k < kFindingKindCount; ++k) {
    if (s.raised_by_kind[k] > 0) {
      add("raised_" + std::string(KindName(static_cast<FindingKind>(k))),
          std::to_string(s.raised_by_kind[k]));
    }
  }
  if (!s.limits) add("limits_note", note);

  switch (options.format) {
    case OutputFormat::kTable: {
      std::vector<std::vector<std::string>> cells;
      for (const auto& [k, v] : rows) cells.push_back({k, v});
      WriteTable(out, {"figure", "value"}, cells, {false, true});
      if (s.limits) out << "(compliance figures: packer's own control, not legal verification)\n";
      break;
    }
    case OutputFormat::kCsv: {
      std::vector<std::string> header, values;
      for (const auto& [k, v] : rows) {
        header.push_back(k);
        values.push_back(v);
      }
      WriteCsv(out, header, {values});
      break;
    }
    case OutputFormat::kJson: {
      nlohmann::ordered_json j;
      for (const auto& [k, v] : rows) {
        if (v.empty()) {
          j[k] = nullptr;
        } else if (k == "line" || k == "from" || k == "to" || k == "first_pack" ||
                   k == "last_pack" || k == "limits_note") {
          j[k] = v;
        } else {
          j[k] = std::stod(v);
        }
      }
      out << j.dump() << "\n";
      break;
    }
  }
  out.flush();
  return out ? 0 : 2;
}

}  // namespace

HEFT_COMMAND("summary", "one line's figures over a time range from a heft database", RunSummary);

}  // namespace heft::cli
