// history_test.cpp — read-only history queries on a prepared database with
// known answers: packs in a time range (from inclusive, to exclusive), the
// newest N, line states with open events, the period summary (mean, sd,
// quartiles, T1/T2, giveaway, capability), errors for a missing file and a
// newer schema, and the HTML report for the same data.
//
// Expected figures for the ten ok packs 498, 499, ..., 507 g (numpy 1.24:
// np.mean = 502.5, np.std(ddof=1) = 3.0276503540974917, np.quantile type 7:
// 500.25 / 502.5 / 504.75). TNE for 500 g is 15 g (3 % of Qn, check-values.md
// §1.2), so T1 = 485 g and T2 = 470 g.
#include <sqlite3.h>
#include <unistd.h>

#include <atomic>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include <catch2/catch.hpp>

#include "core/report/line_report.h"
#include "core/report/period_summary.h"
#include "io/config_loader.h"
#include "io/history_queries.h"
#include "io/sqlite_store.h"

namespace heft {
namespace {

namespace fs = std::filesystem;

class TempDir {
 public:
  TempDir() {
    static std::atomic<int> counter{0};
    path_ = fs::temp_directory_path() /
            ("heft-history-test-" + std::to_string(::getpid()) + "-" + std::to_string(counter++));
    fs::remove_all(path_);
    fs::create_directories(path_);
  }
  ~TempDir() {
    std::error_code ec;
    fs::remove_all(path_, ec);
  }
  std::string File(const std::string& name) const { return (path_ / name).string(); }

 private:
  fs::path path_;
};

constexpr std::int64_t kT0 = 1772431200000;  // 2026-03-02T06:00:00Z

Finding MakeFinding(Transition transition, FindingKind kind, std::int64_t at) {
  Finding f;
  f.transition = transition;
  f.kind = kind;
  f.severity = Severity::kWarning;
  f.line = "oats-1";
  f.at = at;
  f.at_time_ms = kT0 + at * 1000;
  return f;
}

// oats-1: 10 ok packs 498..507 g one second apart (heads 0..1), then one
// rejected pack at 480 g and one weighing error; honey-2: 3 packs.
// Events on oats-1: settling raised at 0 and cleared at 3; shift raised at 8.
std::string Prepare(const TempDir& dir) {
  const std::string path = dir.File("h.db");
  std::unique_ptr<SqliteStore> store;
  REQUIRE(SqliteStore::Open(path, SqliteStore::Mode::kReadWrite, &store).ok());
  LineRow oats{"oats-1", "Rolled oats 500 g", 500.0, 503.0, 2};
  LineRow honey{"honey-2", "Clover honey 340 g jar", 340.0, std::nullopt, 0};
  LineRow spare{"oats-9", "spare line", std::nullopt, std::nullopt, 0};
  REQUIRE(store->UpsertLines({oats, honey, spare}).ok());
  std::vector<SampleRow> samples;
  for (int i = 0; i < 10; ++i) {
    samples.push_back({"oats-1", "test", i, kT0 + i * 1000, 498.0 + i, i % 2, PackStatus::kOk});
  }
  samples.push_back({"oats-1", "test", 10, kT0 + 10'000, 480.0, 0, PackStatus::kRejected});
  samples.push_back({"oats-1", "test", 11, kT0 + 11'000, 999.0, 1, PackStatus::kError});
  for (int i = 0; i < 3; ++i) {
    samples.push_back({"honey-2", "test", i, kT0 + i * 2000, 341.0 + i, kNoHead, PackStatus::kOk});
  }
  std::vector<EventRow> events;
  events.push_back(
      {MakeFinding(Transition::kRaised, FindingKind::kSettling, 0), "settling", "t", 1});
  events.push_back(
      {MakeFinding(Transition::kCleared, FindingKind::kSettling, 3), "settled", "t", 2});
  events.push_back({MakeFinding(Transition::kRaised, FindingKind::kShift, 8), "shift up", "t", 3});
  REQUIRE(store->WriteBatch(events, samples).ok());
  return path;
}

TEST_CASE("history: packs in a time range and the newest N", "[history]") {
  TempDir dir;
  const std::string path = Prepare(dir);
  std::unique_ptr<HistoryReader> reader;
  REQUIRE(HistoryReader::Open(path, &reader).ok());
  std::vector<HistorySample> samples;
  REQUIRE(reader->Samples({"oats-1", std::nullopt, std::nullopt, 0}, &samples).ok());
  CHECK(samples.size() == 12);
  // From inclusive, to exclusive: seconds 2..4.
  REQUIRE(reader->Samples({"oats-1", kT0 + 2000, kT0 + 5000, 0}, &samples).ok());
  REQUIRE(samples.size() == 3);
  CHECK(samples.front().grams == 500.0);
  CHECK(samples.back().grams == 502.0);
  CHECK(samples[1].head == 1);
  // The newest 4, oldest first.
  REQUIRE(reader->Samples({"oats-1", std::nullopt, std::nullopt, 4}, &samples).ok());
  REQUIRE(samples.size() == 4);
  CHECK(samples[0].grams == 506.0);
  CHECK(samples[2].status == 1);
  CHECK(samples[3].status == 2);
  REQUIRE(reader->Samples({"honey-2", std::nullopt, std::nullopt, 0}, &samples).ok());
  CHECK(samples.size() == 3);
  CHECK(samples[0].head == -1);
  REQUIRE(reader->Samples({"nope", std::nullopt, std::nullopt, 0}, &samples).ok());
  CHECK(samples.empty());
}

TEST_CASE("history: line states with the latest pack and open events", "[history]") {
  TempDir dir;
  const std::string path = Prepare(dir);
  std::unique_ptr<HistoryReader> reader;
  REQUIRE(HistoryReader::Open(path, &reader).ok());
  std::vector<LineState> states;
  REQUIRE(reader->LineStates(&states).ok());
  REQUIRE(states.size() == 3);
  CHECK(states[0].line.line == "honey-2");
  CHECK(states[0].packs == 3);
  CHECK(states[0].open_events.empty());
  CHECK(states[1].line.line == "oats-1");
  CHECK(states[1].configured);
  CHECK(states[1].packs == 12);
  REQUIRE(states[1].last_pack_ms);
  CHECK(*states[1].last_pack_ms == kT0 + 11'000);
  // settling was cleared, shift was not.
  CHECK(states[1].open_events == std::vector<std::string>{"shift"});
  CHECK(states[1].line.nominal_g == 500.0);
  CHECK(states[2].line.line == "oats-9");
  CHECK(states[2].packs == 0);
  CHECK(!states[2].last_pack_ms);
}

TEST_CASE("history: period summary with known answers", "[history]") {
  TempDir dir;
  const std::string path = Prepare(dir);
  std::unique_ptr<HistoryReader> reader;
  REQUIRE(HistoryReader::Open(path, &reader).ok());
  std::vector<HistorySample> samples;
  REQUIRE(reader->Samples({"oats-1", std::nullopt, std::nullopt, 0}, &samples).ok());
  EventQuery query;
  query.line = "oats-1";
  std::vector<HistoryEvent> events;
  REQUIRE(reader->Events(query, &events).ok());
  REQUIRE(events.size() == 3);

  std::optional<comply::NetContentLimits> limits;
  std::string rules_name, note;
  LoadLimitsForLine(std::string(HEFT_SOURCE_DIR) + "/config/rules/eu-average-quantity.yaml", 500.0,
                    &limits, &rules_name, &note);
  INFO(note);
  REQUIRE(limits);
  CHECK(limits->tolerance_g == Approx(15.0));  // check-values.md §1.2: 3 % of 500 g
  CHECK(limits->t1_g == Approx(485.0));
  REQUIRE(limits->t2_g);
  CHECK(*limits->t2_g == Approx(470.0));

  const PeriodSummary s = SummarizePeriod(samples, events, limits);
  CHECK(s.packs == 12);
  CHECK(s.ok == 10);
  CHECK(s.rejected == 1);
  CHECK(s.errors == 1);
  // numpy: mean 502.5, sd (ddof 1) 3.0276503540974917, type-7 quartiles.
  CHECK(s.stats.mean == Approx(502.5));
  CHECK(s.stats.sd == Approx(3.0276503540974917));
  CHECK(s.stats.q1 == Approx(500.25));
  CHECK(s.stats.median == Approx(502.5));
  CHECK(s.stats.q3 == Approx(504.75));
  // Moving ranges are all 1 g: short-term sigma 1 / d2(2) = 1 / 1.128379.
  CHECK(s.stats.mr_sigma == Approx(1.0 / 1.1283791670955126));
  REQUIRE(s.capability);
  REQUIRE(s.capability->cpk);
  // Cpk (lower limit only) = (502.5 − 485) / (3 σw).
  CHECK(*s.capability->cpk == Approx(17.5 / (3.0 / 1.1283791670955126)));
  REQUIRE(s.figures);
  // Rejected packs leave the line (LotSettings default): 10 packs in the figures.
  CHECK(s.figures->count == 10);
  CHECK(s.figures->t1_count == 0);
  CHECK(s.figures->rejected == 1);
  CHECK(s.figures->rejected_below_t1 == 1);
  CHECK(s.figures->giveaway_per_pack_g == Approx(2.5));
  CHECK(s.figures->giveaway_g == Approx(25.0));
  REQUIRE(s.giveaway_percent);
  CHECK(*s.giveaway_percent == Approx(0.5));
  CHECK(s.raised == 2);
  CHECK(s.cleared == 1);
  CHECK(s.raised_by_kind[static_cast<int>(FindingKind::kShift)] == 1);

  // No nominal: no limits, and a note saying why.
  LoadLimitsForLine("", std::nullopt, &limits, &rules_name, &note);
  CHECK(!limits);
  CHECK(note.find("nominal") != std::string::npos);
}

TEST_CASE("history: clear errors for a missing file and a newer schema", "[history]") {
  TempDir dir;
  std::unique_ptr<HistoryReader> reader;
  Status missing = HistoryReader::Open(dir.File("absent.db"), &reader);
  CHECK(!missing.ok());
  CHECK(missing.message().find("no database") != std::string::npos);

  const std::string path = Prepare(dir);
  sqlite3* db = nullptr;
  REQUIRE(sqlite3_open(path.c_str(), &db) == SQLITE_OK);
  REQUIRE(sqlite3_exec(db, "PRAGMA user_version = 99", nullptr, nullptr, nullptr) == SQLITE_OK);
  sqlite3_close(db);
  Status newer = HistoryReader::Open(path, &reader);
  CHECK(!newer.ok());
  CHECK(newer.message().find("newer") != std::string::npos);
}

TEST_CASE("history: the report for the prepared data", "[history]") {
  TempDir dir;
  const std::string path = Prepare(dir);
  std::unique_ptr<HistoryReader> reader;
  REQUIRE(HistoryReader::Open(path, &reader).ok());
  ReportInput input;
  std::optional<HistoryLine> line;
  REQUIRE(reader->Line("oats-1", &line).ok());
  REQUIRE(line);
  input.line = *line;
  REQUIRE(reader->Samples({"oats-1", std::nullopt, std::nullopt, 0}, &input.samples).ok());
  EventQuery query;
  query.line = "oats-1";
  REQUIRE(reader->Events(query, &input.events).ok());
  LoadLimitsForLine(std::string(HEFT_SOURCE_DIR) + "/config/rules/eu-average-quantity.yaml",
                    input.line.nominal_g, &input.limits, &input.rules_name, &input.limits_note);
  const std::string html = RenderReportHtml(input);
  CHECK(html.find("<!DOCTYPE html>") == 0);
  CHECK(html.find("<script") == std::string::npos);                        // no JavaScript
  CHECK(html.find("http://") == html.find("http://www.w3.org/2000/svg"));  // no network refs
  CHECK(html.find("id=\"chart-run\"") != std::string::npos);
  CHECK(html.find("id=\"chart-histogram\"") != std::string::npos);
  CHECK(html.find("id=\"chart-boxplot-head\"") != std::string::npos);
  CHECK(html.find("id=\"chart-boxplot-shift\"") != std::string::npos);
  CHECK(html.find("502.500") != std::string::npos);   // the mean in the key figures
  CHECK(html.find("shift up") != std::string::npos);  // the event list
  CHECK(html.find("not legal") != std::string::npos);
  // Settling raised at 0 s and cleared at 3 s is hatched, not a marker.
  CHECK(html.find("class=\"settling\"") != std::string::npos);
  // Heads 0 and 1: two boxes in the by-head plot.
  const std::string head_svg = RenderReportChart(input, ReportChart::kBoxPlotHead);
  std::size_t boxes = 0;
  for (std::size_t p = head_svg.find("class=\"box\""); p != std::string::npos;
       p = head_svg.find("class=\"box\"", p + 1)) {
    ++boxes;
  }
  CHECK(boxes == 2);
}

}  // namespace
}  // namespace heft

namespace heft {
namespace {

// The `http:` block of heftd's config (daemon/http_server.h): off without the
// block, on with it, and positioned errors for bad values.
TEST_CASE("history: http config block", "[history]") {
  Config config;
  std::vector<std::string> errors;
  REQUIRE(LoadConfigText("log:\n  level: info\n", "t.yaml", &config, &errors).ok());
  CHECK(!config.http.enabled);
  CHECK(config.http.address == "127.0.0.1");
  REQUIRE(LoadConfigText("http:\n  port: 0\n", "t.yaml", &config, &errors).ok());
  CHECK(config.http.enabled);
  CHECK(config.http.port == 0);
  REQUIRE(LoadConfigText("http:\n  enabled: false\n  port: 8080\n", "t.yaml", &config, &errors)
              .ok());
  CHECK(!config.http.enabled);
  CHECK(!LoadConfigText("http:\n  port: 70000\n", "t.yaml", &config, &errors).ok());
  REQUIRE(errors.size() == 1);
  CHECK(errors[0] == "t.yaml:2:9: http.port: must be between 0 and 65535, got 70000");
  CHECK(!LoadConfigText("http:\n  token: short\n", "t.yaml", &config, &errors).ok());
  REQUIRE(errors.size() == 1);
  CHECK(errors[0] == "t.yaml:2:10: http.token: must be empty or at least 16 characters long");
  CHECK(!LoadConfigText("http:\n  adress: 0.0.0.0\n", "t.yaml", &config, &errors).ok());
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].find("t.yaml:2:3: http.adress: unknown key") == 0);
}

}  // namespace
}  // namespace heft
