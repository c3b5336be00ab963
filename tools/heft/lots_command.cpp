// lots_command.cpp — `heft lots`: list the closed lots stored in a heft
// database with their net-content figures, verdicts and giveaway.
//
// Opens the database read-only, so it is safe to run while heftd is writing.
// The figures are the packer's own control; the caution says so under the table.
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
#include "core/record/native_record.h"
#include "io/lot_json.h"
#include "io/sqlite_store.h"
#include "record_query_cli.h"

namespace heft::cli {
namespace {

constexpr const char* kUsage =
    "usage: heft lots --db FILE [--line L] [--since T] [--until T] [--limit N]\n"
    "                 [--format table|csv|json]\n"
    "\n"
    "Lists the lots heftd closed (net-content figures, the verdict under each packer's\n"
    "rule, giveaway and the lowest safe target), oldest first. The database is opened\n"
    "read-only; heftd may keep writing.\n"
    "\n"
    "  --db FILE    the database heftd writes (required)\n"
    "  --line L     only lots of line L\n"
    "  --since T    only lots whose last pack is at or after T\n"
    "  --until T    only lots whose first pack is before T\n"
    "               T is ISO-8601 UTC (2026-03-02T06:00:00Z) or epoch milliseconds\n"
    "  --limit N    at most N lots (0 = all, the default)\n"
    "  --format F   table (default, for people), csv (with a header) or json (one\n"
    "               object per line, the form of `heft replay --lots-out`)\n";

int Fail(std::ostream& err, std::string_view message) {
  err << "heft lots: " << message << "\n";
  return 2;
}

std::string TimeText(std::int64_t time_ms) {
  char buffer[32];
  FormatTimeMs(time_ms, buffer);
  std::string text(buffer, buffer + 16);  // "2026-03-02T06:00"
  std::replace(text.begin(), text.end(), 'T', ' ');
  return text;
}

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

// "pass", "FAIL" or "n/a" over every rule: the lot's overall verdict.
std::string Overall(const LotReport& lot) {
  bool any = false;
  for (const LotVerdict& v : lot.verdicts) {
    if (v.state == "fail") return "FAIL";
    if (v.state == "pass") any = true;
  }
  return any ? "pass" : "n/a";
}

std::string VerdictList(const LotReport& lot) {
  std::string text;
  for (const LotVerdict& v : lot.verdicts) {
    if (!text.empty()) text += "; ";
    text += fmt::format("{} {} ({:+.2f} {})", v.rule_id, v.state == "fail" ? "FAIL" : v.state,
                        v.margin, v.unit);
  }
  return text;
}

void WriteTable(const std::vector<LotRow>& rows, std::ostream& out) {
  if (rows.empty()) {
    out << "no lots\n\n" << kLotCaution << "\n";
    return;
  }
  const std::vector<std::string> header = {
      "lot",   "opened (UTC)", "packs",       "mean g", "s g",     "T1",           "T2",
      "gross", "rejects",      "giveaway kg", "money",  "verdict", "safe target g"};
  std::vector<std::vector<std::string>> cells;
  for (const LotRow& row : rows) {
    const LotReport& lot = row.lot;
    const comply::LotFigures& f = lot.figures;
    std::string target;
    if (lot.advice) {
      target = fmt::format("{:.1f}", lot.advice->target_g);
    }
    cells.push_back({lot.lot_id + (lot.partial ? " (partial)" : ""), TimeText(lot.opened_ms),
                     std::to_string(f.count), fmt::format("{:.2f}", f.mean_g),
                     fmt::format("{:.2f}", f.s_g), std::to_string(f.t1_count),
                     std::to_string(f.t2_count), std::to_string(f.gross),
                     std::to_string(f.rejected), fmt::format("{:.2f}", f.giveaway_g / 1000.0),
                     lot.cost_per_kg > 0.0 ? fmt::format("{:.2f}", f.giveaway_money) : "",
                     Overall(lot), target});
  }
  std::vector<std::size_t> width(header.size());
  for (std::size_t c = 0; c < header.size(); ++c) width[c] = header[c].size();
  for (const auto& line : cells) {
    for (std::size_t c = 0; c < line.size(); ++c) width[c] = std::max(width[c], line[c].size());
  }
  const auto write_row = [&](const std::vector<std::string>& line) {
    std::string text;
    for (std::size_t c = 0; c < line.size(); ++c) {
      const bool left = c <= 1 || c == 11;
      if (left) {
        text += line[c] + std::string(width[c] - line[c].size(), ' ') + "  ";
      } else {
        text += std::string(width[c] - line[c].size(), ' ') + line[c] + "  ";
      }
    }
    while (!text.empty() && text.back() == ' ') text.pop_back();
    out << text << "\n";
  };
  write_row(header);
  for (const auto& line : cells) write_row(line);

  // Per lot: the rules with their margins, then the safe-target advice.
  out << "\n";
  for (const LotRow& row : rows) {
    const LotReport& lot = row.lot;
    out << lot.lot_id << ": nominal " << fmt::format("{:.1f}", lot.nominal_g) << " g, TNE "
        << fmt::format("{:.1f}", lot.tne_g) << " g (" << lot.rules_id << "); " << VerdictList(lot)
        << "\n";
    if (lot.advice) out << "  " << lot.advice->text << "\n";
  }
  out << "\n" << kLotCaution << "\n";
}

void WriteCsv(const std::vector<LotRow>& rows, std::ostream& out) {
  out << "line,seq,lot_id,boundary,partial,opened,first_index,last_index,count,mean_g,s_g,"
         "short_term_sigma_g,t1_count,t2_count,below_nominal,gross,rejected,giveaway_g,"
         "giveaway_money,nominal_g,tne_g,rules,verdict,verdicts,safe_target_g,"
         "saving_per_year_kg,source\n";
  for (const LotRow& row : rows) {
    const LotReport& lot = row.lot;
    const comply::LotFigures& f = lot.figures;
    char opened[32];
    FormatTimeMs(lot.opened_ms, opened);
    out << CsvField(lot.line) << ',' << lot.seq << ',' << CsvField(lot.lot_id) << ','
        << lot.boundary << ',' << (lot.partial ? 1 : 0) << ',' << opened << ',' << f.first_index
        << ',' << f.last_index << ',' << f.count << ',' << fmt::format("{:.4f}", f.mean_g) << ','
        << fmt::format("{:.4f}", f.s_g) << ',' << fmt::format("{:.4f}", f.short_term_sigma_g) << ','
        << f.t1_count << ',' << f.t2_count << ',' << f.below_nominal << ',' << f.gross << ','
        << f.rejected << ',' << fmt::format("{:.3f}", f.giveaway_g) << ','
        << fmt::format("{:.2f}", f.giveaway_money) << ',' << fmt::format("{:.4f}", lot.nominal_g)
        << ',' << fmt::format("{:.4f}", lot.tne_g) << ',' << CsvField(lot.rules_id) << ','
        << Overall(lot) << ',' << CsvField(VerdictList(lot)) << ','
        << (lot.advice ? fmt::format("{:.3f}", lot.advice->target_g) : "") << ','
        << (lot.advice ? fmt::format("{:.1f}", lot.advice->saving_per_year_kg) : "") << ','
        << CsvField(row.source) << "\n";
  }
}

int RunLots(const Args& args, std::ostream& out, std::ostream& err) {
  ArgReader reader(args);
  RecordQueryOptions options;
  while (!reader.Done()) {
    std::string problem;
    if (reader.Flag("--help") || reader.Flag("-h")) {
      out << kUsage << "\n" << kLotCaution << "\n";
      return 0;
    } else if (TakeRecordQueryOption(reader, &options, &problem)) {
      if (!problem.empty()) return Fail(err, problem);
    } else if (!reader.error.empty()) {
      return Fail(err, reader.error);
    } else {
      return Fail(err, "unexpected argument '" + reader.Peek() + "' (see heft lots --help)");
    }
  }
  if (options.db.empty()) return Fail(err, "--db FILE is required (see heft lots --help)");

  LotQuery query;
  ApplyRecordQueryOptions(options, &query);
  const OutputFormat format = options.format;
  const std::string& db_path = options.db;

  std::unique_ptr<SqliteStore> store;
  if (Status s = SqliteStore::Open(db_path, SqliteStore::Mode::kReadOnly, &store); !s.ok()) {
    return Fail(err, s.message());
  }
  if (store->schema_version() < 3) {
    return Fail(err, fmt::format("{}: schema version {} has no lots yet (they came with version "
                                 "3); start this heftd on it once to upgrade",
                                 db_path, store->schema_version()));
  }
  std::vector<LotRow> rows;
  if (Status s = store->QueryLots(query, &rows); !s.ok()) return Fail(err, s.message());

  switch (format) {
    case OutputFormat::kTable:
      WriteTable(rows, out);
      break;
    case OutputFormat::kCsv:
      WriteCsv(rows, out);
      break;
    case OutputFormat::kJson:
      for (const LotRow& row : rows) out << LotToJson(row.lot) << "\n";
      break;
  }
  out.flush();
  return out ? 0 : 2;
}

}  // namespace

HEFT_COMMAND("lots", "list closed lots (net-content figures, verdicts, giveaway) in a database",
             RunLots);

}  // namespace heft::cli
