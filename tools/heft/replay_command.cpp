// heft replay — run a recorded feed through the daemon's core and write every
// event state change as one JSON object per line (the contract in event_json.h).
#include <cstdio>
#include <fstream>
#include <iostream>
#include <string>

#include "command.h"
#include "core/record/native_record.h"
#include "io/config_loader.h"
#include "io/event_json.h"
#include "io/feed_replay.h"

namespace heft::cli {
namespace {

constexpr int kMaxProblemsShown = 20;

void Help(std::ostream& out) {
  out << "usage: heft replay FEED.csv [--config FILE] [--nominal GRAMS] --events-out EVENTS.jsonl\n"
         "  Runs FEED (native CSV; - for stdin) through the same core as heftd and writes one\n"
         "  JSON object per event state change to EVENTS (- for stdout). Record indexes are\n"
         "  0-based data records (the header does not count; a malformed record does).\n"
         "  --config FILE   line settings from a heftd config (default: built-in defaults)\n"
         "  --nominal G     nominal quantity in grams for lines the config does not name\n";
}

int RunReplay(const Args& args, std::ostream& out, std::ostream& err) {
  ArgReader reader(args);
  std::string feed, config_path, nominal_text, events_out;
  while (!reader.Done()) {
    if (reader.Flag("--help") || reader.Flag("-h")) {
      Help(out);
      return 0;
    }
    if (reader.Option("--config", &config_path) || reader.Option("--nominal", &nominal_text) ||
        reader.Option("--events-out", &events_out)) {
      continue;
    }
    if (!reader.error.empty()) break;
    if (reader.Peek().rfind("--", 0) == 0 || !feed.empty()) {
      err << "heft replay: unexpected argument '" << reader.Peek() << "'\n";
      return 2;
    }
    feed = reader.Take();
  }
  if (!reader.error.empty()) {
    err << "heft replay: " << reader.error << "\n";
    return 2;
  }
  if (feed.empty() || events_out.empty()) {
    err << "heft replay: a FEED and --events-out are required\n";
    Help(err);
    return 2;
  }

  Config config;
  if (!config_path.empty()) {
    std::vector<std::string> errors;
    if (!LoadConfigFile(config_path, &config, &errors).ok()) {
      err << "heft replay: " << (errors.empty() ? config_path + ": invalid" : errors.front())
          << (errors.size() > 1 ? " (and " + std::to_string(errors.size() - 1) + " more)" : "")
          << "\n";
      return 2;
    }
  }
  if (!nominal_text.empty()) {
    const auto nominal = ParseWeightGrams(nominal_text);
    if (!nominal || *nominal <= 0.0) {
      err << "heft replay: --nominal: not a weight: '" << nominal_text << "'\n";
      return 2;
    }
    config.plant.defaults.nominal_g = *nominal;
  }

  std::ofstream file;
  std::ostream* events = &out;
  if (events_out != "-") {
    file.open(events_out, std::ios::binary | std::ios::trunc);
    if (!file) {
      err << "heft replay: " << events_out << ": cannot write\n";
      return 2;
    }
    events = &file;
  }

  int problems_shown = 0;
  ReplayCallbacks callbacks;
  callbacks.on_finding = [&](const Finding& f, std::string_view message) {
    *events << FindingToJson(f, message) << '\n';
  };
  callbacks.on_problem = [&](const RecordProblem& p) {
    if (problems_shown++ < kMaxProblemsShown) {
      err << feed << ": record #" << p.index << ": " << RecordErrorName(p.error)
          << (p.field >= 0 ? " in field " + std::to_string(p.field + 1) : "") << ": '"
          << p.excerpt << "'\n";
    }
  };
  ReplayResult result;
  const Status status = ReplayFeed(feed, config.plant, callbacks, &result);
  if (!status.ok()) {
    err << "heft replay: " << status.message() << "\n";
    return 2;
  }
  events->flush();
  if (!*events) {
    err << "heft replay: " << events_out << ": write failed\n";
    return 2;
  }
  if (problems_shown > kMaxProblemsShown) {
    err << feed << ": " << (problems_shown - kMaxProblemsShown) << " more bad records not shown\n";
  }
  err << "heft replay: " << result.counters.records << " records, " << result.counters.accepted
      << " accepted, " << result.counters.malformed << " malformed, " << result.lines
      << " lines, " << result.findings << " events\n";
  return 0;
}

}  // namespace

HEFT_COMMAND("replay", "run a recorded feed through the core; write events as JSON lines",
             RunReplay);

}  // namespace heft::cli
