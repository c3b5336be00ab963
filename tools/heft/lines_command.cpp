// lines_command.cpp — `heft lines`: the lines a heft database knows and their
// latest state (last pack time, stored packs, open events), read-only.
#include <memory>
#include <ostream>
#include <string>
#include <vector>

#include <fmt/core.h>
#include <nlohmann/json.hpp>

#include "command.h"
#include "history_cli.h"
#include "io/history_queries.h"

namespace heft::cli {
namespace {

constexpr const char* kUsage =
    "usage: heft lines --db FILE [--line L] [--format table|csv|json] [--local]\n"
    "\n"
    "The configured lines (and any seen only in the data) with their latest state:\n"
    "product, nominal, last pack time, stored packs and open events (raised without\n"
    "a later clear). The database is opened read-only; heftd may keep writing.\n";

int Fail(std::ostream& err, const std::string& message) {
  err << "heft lines: " << message << "\n";
  return 2;
}

std::string Join(const std::vector<std::string>& items, const char* sep) {
  std::string out;
  for (const auto& item : items) {
    if (!out.empty()) out += sep;
    out += item;
  }
  return out;
}

int RunLines(const Args& args, std::ostream& out, std::ostream& err) {
  HistoryOptions options;
  if (auto done = ReadHistoryArgs(args, "lines", kUsage, false, out, err, &options)) return *done;
  std::unique_ptr<HistoryReader> history;
  if (Status s = HistoryReader::Open(options.db, &history); !s.ok()) return Fail(err, s.message());
  std::vector<LineState> states;
  if (Status s = history->LineStates(&states); !s.ok()) return Fail(err, s.message());
  if (!options.line.empty()) {
    std::erase_if(states, [&](const LineState& st) { return st.line.line != options.line; });
  }

  if (options.format == OutputFormat::kJson) {
    nlohmann::ordered_json j = nlohmann::ordered_json::array();
    for (const LineState& st : states) {
      nlohmann::ordered_json o;
      o["line"] = st.line.line;
      o["configured"] = st.configured;
      o["product"] = st.line.product;
      o["nominal_g"] = st.line.nominal_g ? nlohmann::ordered_json(*st.line.nominal_g) : nullptr;
      o["target_g"] = st.line.target_g ? nlohmann::ordered_json(*st.line.target_g) : nullptr;
      o["heads"] = st.line.heads;
      o["packs"] = st.packs;
      o["last_pack"] =
          st.last_pack_ms
              ? nlohmann::ordered_json(DisplayTime(*st.last_pack_ms, options.local, true))
              : nullptr;
      o["open_events"] = st.open_events;
      j.push_back(o);
    }
    out << j.dump() << "\n";
    return out ? 0 : 2;
  }
  std::vector<std::vector<std::string>> rows;
  for (const LineState& st : states) {
    rows.push_back(
        {st.line.line, st.configured ? "yes" : "no", st.line.product,
         st.line.nominal_g ? fmt::format("{:g}", *st.line.nominal_g) : "", std::to_string(st.packs),
         st.last_pack_ms
             ? DisplayTime(*st.last_pack_ms, options.local, options.format == OutputFormat::kCsv)
             : "",
         Join(st.open_events, options.format == OutputFormat::kCsv ? ";" : ", ")});
  }
  const std::string time_header = options.format == OutputFormat::kCsv
                                      ? "last_pack"
                                      : "last pack (" + ZoneName(options.local) + ")";
  const std::vector<std::string> header = {"line",  "configured", "product",    "nominal_g",
                                           "packs", time_header,  "open_events"};
  if (options.format == OutputFormat::kCsv) {
    WriteCsv(out, header, rows);
  } else if (rows.empty()) {
    out << "no lines\n";
  } else {
    WriteTable(out, header, rows, {false, false, false, true, true, false, false});
  }
  out.flush();
  return out ? 0 : 2;
}

}  // namespace

HEFT_COMMAND("lines", "the lines in a heft database and their latest state", RunLines);

}  // namespace heft::cli
