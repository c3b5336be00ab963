// heft replay — run a recorded feed through the daemon's core and write every
// event state change as one JSON object per line (the contract in event_json.h).
#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <string>

#include "command.h"
#include "core/record/native_record.h"
#include "io/config_loader.h"
#include "io/event_json.h"
#include "io/feed_replay.h"
#include "io/source_settings.h"
#include "io/lot_json.h"
#include "io/rule_table_finder.h"

namespace heft::cli {
namespace {

constexpr int kMaxProblemsShown = 20;

void Help(std::ostream& out) {
  out << "usage: heft replay FEED.csv [--config FILE] [--nominal GRAMS] --events-out EVENTS.jsonl\n"
         "  Runs FEED (native CSV; - for stdin) through the same core as heftd and writes one\n"
         "  JSON object per event state change to EVENTS (- for stdout). Record indexes are\n"
         "  0-based data records (the header does not count; a malformed record does).\n"
         "  --config FILE   line settings from a heftd config (default: built-in defaults)\n"
         "  --nominal G     nominal quantity in grams for lines the config does not name\n"
         "  --format-config FILE --source NAME\n"
         "                  read FEED with the record format of source NAME in the heftd\n"
         "                  config FILE (a recorded non-native feed)\n"
         "  --lots-out LOTS write one JSON object per closed lot (net-content figures,\n"
         "                  verdicts, lowest safe target) to LOTS; the lots still open at\n"
         "                  the end of the feed are closed as partial\n";
}

int RunReplay(const Args& args, std::ostream& out, std::ostream& err) {
  ArgReader reader(args);
  std::string feed, config_path, nominal_text, events_out, lots_out;
  std::string format_config, source_name;  // --format-config FILE --source NAME
  while (!reader.Done()) {
    if (reader.Flag("--help") || reader.Flag("-h")) {
      Help(out);
      return 0;
    }
    if (reader.Option("--config", &config_path) || reader.Option("--nominal", &nominal_text) ||
        reader.Option("--events-out", &events_out) || reader.Option("--lots-out", &lots_out) ||
        reader.Option("--format-config", &format_config) ||
        reader.Option("--source", &source_name)) {
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
  // A recorded non-native feed: read it with a configured source's format.
  SourceSettings source;
  const bool use_source = !source_name.empty();
  if (use_source != !format_config.empty()) {
    err << "heft replay: --format-config FILE and --source NAME go together\n";
    return 2;
  }
  if (use_source) {
    Config format_file;
    std::vector<std::string> errors;
    if (!LoadConfigFile(format_config, &format_file, &errors).ok()) {
      err << "heft replay: " << (errors.empty() ? format_config + ": invalid" : errors.front())
          << "\n";
      return 2;
    }
    const auto it = std::find_if(format_file.sources.begin(), format_file.sources.end(),
                                 [&](const SourceSettings& s) { return s.name == source_name; });
    if (it == format_file.sources.end()) {
      err << "heft replay: " << format_config << ": no source named '" << source_name << "'\n";
      return 2;
    }
    source = *it;
  }
  if (!nominal_text.empty()) {
    const auto nominal = ParseWeightGrams(nominal_text);
    if (!nominal || *nominal <= 0.0) {
      err << "heft replay: --nominal: not a weight: '" << nominal_text << "'\n";
      return 2;
    }
    config.plant.defaults.nominal_g = *nominal;
  }
  // Rule tables for lines with a nominal (the config loader did the named
  // lines; this adds the defaults when --nominal gave them one).
  const std::string config_dir =
      std::filesystem::path(config_path).parent_path().string();  // "" without --config
  if (Status s = ResolvePlantRules(&config.plant, config_dir); !s.ok()) {
    err << "heft replay: " << s.message() << "\n";
    return 2;
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

  std::ofstream lots_file;
  std::ostream* lots = nullptr;
  if (!lots_out.empty()) {
    if (lots_out == "-") {
      lots = &out;
    } else {
      lots_file.open(lots_out, std::ios::binary | std::ios::trunc);
      if (!lots_file) {
        err << "heft replay: " << lots_out << ": cannot write\n";
        return 2;
      }
      lots = &lots_file;
    }
  }

  int problems_shown = 0;
  ReplayCallbacks callbacks;
  if (lots != nullptr) {
    callbacks.on_lot = [&](const LotReport& lot) { *lots << LotToJson(lot) << '\n'; };
  }
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
  const Status status =
      ReplayFeed(feed, config.plant, callbacks, &result, use_source ? &source : nullptr);
  if (!status.ok()) {
    err << "heft replay: " << status.message() << "\n";
    return 2;
  }
  events->flush();
  if (!*events) {
    err << "heft replay: " << events_out << ": write failed\n";
    return 2;
  }
  if (lots != nullptr) {
    lots->flush();
    if (!*lots) {
      err << "heft replay: " << lots_out << ": write failed\n";
      return 2;
    }
  }
  if (problems_shown > kMaxProblemsShown) {
    err << feed << ": " << (problems_shown - kMaxProblemsShown) << " more bad records not shown\n";
  }
  err << "heft replay: " << result.counters.records << " records, " << result.counters.accepted
      << " accepted, " << result.counters.malformed << " malformed, " << result.lines
      << " lines, " << result.findings << " events"
      << (lots != nullptr ? ", " + std::to_string(result.lots) + " lots" : std::string()) << "\n";
  return 0;
}

}  // namespace

HEFT_COMMAND("replay", "run a recorded feed through the core; write events as JSON lines",
             RunReplay);

}  // namespace heft::cli
