// lots_test.cpp — per-line compliance accounting (core/monitor/line_compliance.h)
// and its wiring into the Plant: lots, closed-lot reports, compliance findings.
#include <catch2/catch.hpp>

#include <memory>
#include <string>
#include <vector>

#include "core/monitor/line_compliance.h"
#include "core/monitor/plant.h"
#include "io/lot_json.h"
#include "io/rule_table_loader.h"

namespace heft {
namespace {

constexpr std::int64_t kSix = 1772431200000;  // 2026-03-02T06:00:00Z

std::shared_ptr<const comply::RuleTable> EuTable() {
  auto table = std::make_shared<comply::RuleTable>();
  std::vector<std::string> errors;
  REQUIRE(LoadRuleTableFile(std::string(HEFT_SOURCE_DIR) + "/config/rules/eu-average-quantity.yaml",
                            table.get(), &errors)
              .ok());
  return table;
}

LineSettings CountLots(std::int64_t packs) {
  LineSettings s;
  s.nominal_g = 500.0;
  s.lots.boundary = comply::LotBoundary::kCount;
  s.lots.packs_per_lot = packs;
  return s;
}

Pack At(std::int64_t index, double grams, PackStatus status = PackStatus::kOk) {
  Pack p;
  p.index = index;
  p.time_ms = kSix + index * 1000;  // one pack a second
  p.grams = grams;
  p.status = status;
  return p;
}

const LotVerdict* Verdict(const LotReport& lot, const std::string& rule) {
  for (const auto& v : lot.verdicts) {
    if (v.rule_id == rule) return &v;
  }
  return nullptr;
}

TEST_CASE("lots: the gross-pack rule matches the monitor's", "[lots]") {
  CHECK(IsGrossPack(0.0, 500.0, 0.5, 1.5));
  CHECK(IsGrossPack(-3.0, 500.0, 0.5, 1.5));
  CHECK(IsGrossPack(249.9, 500.0, 0.5, 1.5));
  CHECK_FALSE(IsGrossPack(250.0, 500.0, 0.5, 1.5));
  CHECK_FALSE(IsGrossPack(750.0, 500.0, 0.5, 1.5));
  CHECK(IsGrossPack(750.1, 500.0, 0.5, 1.5));
}

TEST_CASE("lots: a hand-worked count lot closes with figures and verdicts", "[lots]") {
  LineSettings settings = CountLots(12);
  settings.cost_per_kg = 2.0;
  std::unique_ptr<LineCompliance> lc;
  REQUIRE(LineCompliance::Create("oats-1", settings, EuTable(), &lc).ok());
  // 500 g is in the 15 g TNE band of 76/211/EEC Annex I (check-values.md §1.1):
  // T1 = 485 g, T2 = 470 g.
  CHECK(lc->limits().t1_g == Approx(485.0));
  REQUIRE(lc->limits().t2_g);
  CHECK(*lc->limits().t2_g == Approx(470.0));

  const std::vector<double> w = {502, 498, 501, 484, 503, 500, 499, 505, 497, 501};
  std::vector<Finding> findings;
  std::vector<LotReport> closed;
  std::int64_t i = 0;
  for (double g : w) lc->Push(At(i++, g), &findings, &closed);
  lc->Push(At(i++, 120.0), &findings, &closed);                         // gross
  lc->Push(At(i++, 480.0, PackStatus::kRejected), &findings, &closed);  // rejected, below T1
  CHECK(closed.empty());
  lc->Push(At(i++, 503.0), &findings, &closed);  // the 13th pack opens lot 2
  REQUIRE(closed.size() == 1);
  const LotReport& lot = closed[0];
  CHECK(lot.line == "oats-1");
  CHECK(lot.seq == 1);
  CHECK(lot.lot_id == "oats-1 #1");
  CHECK(lot.boundary == "count");
  CHECK_FALSE(lot.partial);
  const comply::LotFigures& f = lot.figures;
  CHECK(f.count == 10);
  CHECK(f.seen == 12);
  CHECK(f.gross == 1);
  CHECK(f.rejected == 1);
  CHECK(f.rejected_below_t1 == 1);
  CHECK(f.first_index == 0);
  CHECK(f.last_index == 11);
  // numpy: mean 499.0, std(ddof=1) 5.773502691896258,
  // mean |diff| / 1.128 = 6.402679275019701 (d2 for n = 2, check-values.md §2).
  CHECK(f.mean_g == Approx(499.0).epsilon(1e-12));
  CHECK(f.s_g == Approx(5.773502691896258).epsilon(1e-12));
  CHECK(f.short_term_sigma_g == Approx(6.402679275019701).epsilon(1e-12));
  CHECK(f.t1_count == 1);  // 484 g
  CHECK(f.t2_count == 0);
  CHECK(f.below_nominal == 4);  // 498, 484, 499, 497
  CHECK(f.giveaway_g == Approx(-10.0));
  CHECK(f.giveaway_money == Approx(-0.02));  // -10 g at 2.00 per kg
  const LotVerdict* mean = Verdict(lot, "mean");
  REQUIRE(mean != nullptr);
  CHECK(mean->state == "fail");
  CHECK(mean->margin == Approx(-1.0));
  const LotVerdict* share = Verdict(lot, "t1_share");
  REQUIRE(share != nullptr);
  CHECK(share->state == "fail");  // floor(2.5 % × 10) = 0 allowed, 1 seen
  CHECK(share->margin == Approx(-1.0));
  CHECK(share->unit == "packs");
  const LotVerdict* t2 = Verdict(lot, "no_t2");
  REQUIRE(t2 != nullptr);
  CHECK(t2->state == "pass");
  CHECK(t2->margin == Approx(14.0));    // lightest 484 − T2 470
  CHECK_FALSE(lot.advice.has_value());  // 10 packs are too few for advice

  // Closing by hand marks the partial lot; nothing is left afterwards.
  lc->CloseLot(true, &closed);
  REQUIRE(closed.size() == 2);
  CHECK(closed[1].partial);
  CHECK(closed[1].seq == 2);
  CHECK(closed[1].figures.count == 1);
  lc->CloseLot(true, &closed);
  CHECK(closed.size() == 2);
}

TEST_CASE("lots: one T2 pack raises an alarm at once and clears once, without chatter", "[lots]") {
  LineSettings settings = CountLots(200);
  std::unique_ptr<LineCompliance> lc;
  REQUIRE(LineCompliance::Create("oats-1", settings, EuTable(), &lc).ok());
  std::vector<Finding> findings;
  std::vector<LotReport> closed;
  for (std::int64_t i = 0; i < 600; ++i) {
    double g = (i % 2 == 0) ? 502.0 : 504.0;
    if (i == 3) g = 460.0;  // below T2 (470 g) at the start of lot 1
    lc->Push(At(i, g), &findings, &closed);
  }
  REQUIRE(findings.size() == 2);
  CHECK(findings[0].transition == Transition::kRaised);
  CHECK(findings[0].kind == FindingKind::kCompliance);
  CHECK(findings[0].severity == Severity::kAlarm);
  CHECK(findings[0].detector == "t2-seen");
  CHECK(findings[0].at == 3);
  CHECK(findings[1].transition == Transition::kCleared);
  // Cleared only in lot 2 (from pack 200), after the hold-off.
  CHECK(findings[1].at >= 200 + settings.compliance_hold_off_packs);
  CHECK(findings[1].at < 400);
  REQUIRE(closed.size() == 2);
  CHECK(closed[0].figures.t2_count == 1);
  CHECK(Verdict(closed[0], "no_t2")->state == "fail");
  CHECK(Verdict(closed[1], "no_t2")->state == "pass");
  CHECK(closed[1].advice.has_value());
}

TEST_CASE("lots: a clear still comes when record numbering restarts (reconnect)", "[lots]") {
  // As above, but the feed reconnects at pack 250 of the stream, so record indexes start
  // at 0 again while the clear's hold-off is running. The hold-off then counts from the
  // new numbering; it used to wait until the index passed the old one.
  LineSettings settings = CountLots(200);
  std::unique_ptr<LineCompliance> lc;
  REQUIRE(LineCompliance::Create("oats-1", settings, EuTable(), &lc).ok());
  std::vector<Finding> findings;
  std::vector<LotReport> closed;
  for (std::int64_t i = 0; i < 600; ++i) {
    double g = (i % 2 == 0) ? 502.0 : 504.0;
    if (i == 3) g = 460.0;
    Pack p = At(i, g);
    if (i >= 250) p.index = i - 250;  // reconnected: indexes from 0, times go on
    lc->Push(p, &findings, &closed);
  }
  REQUIRE(findings.size() == 2);
  CHECK(findings[1].transition == Transition::kCleared);
  CHECK(findings[1].at <=
        settings.compliance_hold_off_packs + 2 * LineCompliance::kAssessEveryPacks);
}

TEST_CASE("lots: a falling fill raises a warning or alarm on the mean, then clears", "[lots]") {
  LineSettings settings = CountLots(1000);
  std::unique_ptr<LineCompliance> lc;
  REQUIRE(LineCompliance::Create("oats-1", settings, EuTable(), &lc).ok());
  std::vector<Finding> findings;
  std::vector<LotReport> closed;
  // Alternating ±1 g about a level that is 503 g, then 498 g from pack 300,
  // then 503 g again from lot 2 (pack 1000).
  for (std::int64_t i = 0; i < 2000; ++i) {
    const double level = (i >= 300 && i < 1000) ? 498.0 : 503.0;
    lc->Push(At(i, level + ((i % 2 == 0) ? 1.0 : -1.0)), &findings, &closed);
  }
  REQUIRE(findings.size() >= 2);
  CHECK(findings.front().transition == Transition::kRaised);
  CHECK(findings.front().at > 300);
  CHECK(findings.front().at < 420);  // the rolling level sees the drop within ~60 packs
  CHECK(findings.back().transition == Transition::kCleared);
  CHECK(findings.back().at >= 1000);
  int raised = 0;
  for (const Finding& f : findings) raised += f.transition == Transition::kRaised;
  CHECK(raised <= 2);  // warning, then at most one escalation
}

TEST_CASE("lots: the Plant keeps hourly lots for lines with a nominal and a table", "[lots]") {
  PlantSettings settings;
  auto table = EuTable();
  settings.rule_tables.emplace("eu", table);
  LineSettings oats;
  oats.nominal_g = 500.0;
  oats.rules = "eu";
  oats.cost_per_kg = 2.4;
  settings.lines.emplace("oats-1", oats);
  LineSettings plain;  // no nominal: no lots
  plain.rules = "eu";
  settings.lines.emplace("bare-1", plain);
  Plant plant(settings);
  std::vector<Finding> findings;
  // 06:59:00 .. 07:00:59, one pack a second on each line.
  for (std::int64_t i = 0; i < 120; ++i) {
    for (const char* line : {"oats-1", "bare-1"}) {
      RecordView r;
      r.line = line;
      r.has_time = true;
      r.time_ms = kSix + 59 * 60'000 + i * 1000;
      r.grams = 503.0 + ((i % 3) - 1);
      REQUIRE(plant.Accept(r, 2 * i, 0, &findings) == Plant::Accepted::kYes);
    }
  }
  std::vector<LotReport> lots = plant.TakeClosedLots();
  REQUIRE(lots.size() == 1);
  CHECK(lots[0].lot_id == "oats-1 2026-03-02T06:00Z");
  CHECK(lots[0].figures.count == 60);
  CHECK(lots[0].opened_ms == kSix);
  CHECK(plant.TakeClosedLots().empty());
  plant.CloseAllLots();
  lots = plant.TakeClosedLots();
  REQUIRE(lots.size() == 1);
  CHECK(lots[0].lot_id == "oats-1 2026-03-02T07:00Z");
  CHECK(lots[0].partial);
  CHECK(lots[0].seq == 2);
  REQUIRE(lots[0].advice.has_value());
  CHECK(lots[0].advice->text.find("Advice only") != std::string::npos);
  // The JSON form keeps its key order.
  const std::string json = LotToJson(lots[0]);
  CHECK(json.rfind("{\"line\":\"oats-1\",\"seq\":2,\"lot_id\":", 0) == 0);
  CHECK(json.find("\"caution\":") != std::string::npos);
  CHECK_FALSE(plant.CloseLot("bare-1"));
  CHECK(plant.CloseLot("oats-1"));  // nothing open: no report, still a lot line
  CHECK(plant.TakeClosedLots().empty());
}

TEST_CASE("lots: Create refuses settings it cannot account", "[lots]") {
  std::unique_ptr<LineCompliance> lc;
  LineSettings none;
  CHECK_FALSE(LineCompliance::Create("x", none, EuTable(), &lc).ok());
  LineSettings bad_count = CountLots(0);
  const Status s = LineCompliance::Create("x", bad_count, EuTable(), &lc);
  CHECK_FALSE(s.ok());
  CHECK(s.message().find("packs_per_lot") != std::string::npos);
  CHECK(lc == nullptr);
}

}  // namespace
}  // namespace heft
