// Behaviour of the line monitor, the plant router and stream ingest on
// invented data with a known truth (our own scenario; noise from heft's PRNG).
#include "core/monitor/line_monitor.h"
#include "core/monitor/plant.h"
#include "core/monitor/stream_ingest.h"

#include <catch2/catch.hpp>

#include <cmath>
#include <string>
#include <vector>

#include "core/sim/random_source.h"

using namespace heft;

namespace {

constexpr double kLevel = 503.0;
constexpr double kSigma = 1.6;
constexpr std::int64_t kStartMs = 1'772'431'200'000;  // 2026-03-02T06:00:00Z
constexpr std::int64_t kStepMs = 500;                 // 120 packs per minute

LineSettings OatsLine() {
  LineSettings s;
  s.nominal_g = 500.0;
  s.baseline_packs = 200;
  s.silence_ms = 20'000;
  return s;
}

Pack MakePack(std::int64_t i, double grams, std::int64_t time_ms) {
  Pack p;
  p.index = i;
  p.time_ms = time_ms;
  p.grams = grams;
  return p;
}

std::vector<Finding> Only(const std::vector<Finding>& all, FindingKind kind) {
  std::vector<Finding> out;
  for (const auto& f : all) {
    if (f.kind == kind) out.push_back(f);
  }
  return out;
}

}  // namespace

TEST_CASE("monitor settles after a start-up transient, then catches a 2-sigma step", "[monitor]") {
  LineMonitor monitor("oats-1", OatsLine());
  RandomSource rng(20260302);
  std::vector<Finding> findings;
  for (std::int64_t i = 0; i < 3000; ++i) {
    double x = kLevel + kSigma * rng.Normal();
    x += 8.0 * kSigma * std::exp(-static_cast<double>(i) / 20.0);  // first-order start-up
    if (i >= 1500) x += 2.0 * kSigma;                              // the step
    monitor.Push(MakePack(i, x, kStartMs + i * kStepMs), &findings);
  }
  const auto settling = Only(findings, FindingKind::kSettling);
  REQUIRE(settling.size() == 2);
  CHECK(settling[0].transition == Transition::kRaised);
  CHECK(settling[0].at == 0);
  CHECK(settling[1].transition == Transition::kCleared);
  REQUIRE(settling[1].end.has_value());
  // The transient is below a quarter sigma after 20·ln(32) ≈ 69 packs.
  CHECK(*settling[1].end >= 40);
  CHECK(*settling[1].end <= 120);
  CHECK(*settling[1].level_g == Approx(kLevel).margin(0.5));

  const auto shifts = Only(findings, FindingKind::kShift);
  REQUIRE(shifts.size() >= 1);
  CHECK(shifts[0].transition == Transition::kRaised);
  CHECK(shifts[0].at >= 1500);
  CHECK(shifts[0].at <= 1530);
  REQUIRE(shifts[0].onset.has_value());
  CHECK(*shifts[0].onset >= 1485);
  CHECK(*shifts[0].onset <= 1515);
  CHECK(*shifts[0].size_sigma > 1.2);
  CHECK(*shifts[0].size_sigma < 3.0);
  CHECK(*shifts[0].size_g == Approx(*shifts[0].size_sigma * monitor.Snapshot().baseline_sigma_g));
  CHECK(shifts[0].severity == Severity::kAlarm);
}

TEST_CASE("monitor stays quiet on an in-control line", "[monitor]") {
  LineMonitor monitor("oats-1", OatsLine());
  RandomSource rng(7);
  std::vector<Finding> findings;
  for (std::int64_t i = 0; i < 20000; ++i) {
    monitor.Push(MakePack(i, kLevel + kSigma * rng.Normal(), kStartMs + i * kStepMs), &findings);
  }
  // Only the settling pair: the design allows one false alarm per day (172,800 packs).
  CHECK(Only(findings, FindingKind::kShift).empty());
  CHECK(Only(findings, FindingKind::kSettling).size() == 2);
  const LineSnapshot s = monitor.Snapshot();
  CHECK_FALSE(s.settling);
  CHECK(s.baseline_level_g == Approx(kLevel).margin(0.5));
  CHECK(s.baseline_sigma_g == Approx(kSigma).epsilon(0.15));
}

TEST_CASE("a silence ends, clears and restarts settling", "[monitor]") {
  LineMonitor monitor("oats-1", OatsLine());
  RandomSource rng(11);
  std::vector<Finding> findings;
  std::int64_t t = kStartMs;
  for (std::int64_t i = 0; i < 400; ++i, t += kStepMs) {
    monitor.Push(MakePack(i, kLevel + kSigma * rng.Normal(), t), &findings);
  }
  findings.clear();
  t += 90'000;  // the line stops for a minute and a half
  monitor.Push(MakePack(400, kLevel, t), &findings);
  REQUIRE(findings.size() == 3);
  CHECK(findings[0].kind == FindingKind::kSilence);
  CHECK(findings[0].transition == Transition::kRaised);
  CHECK(*findings[0].onset == 399);
  CHECK(findings[1].kind == FindingKind::kSilence);
  CHECK(findings[1].transition == Transition::kCleared);
  CHECK(*findings[1].end == 400);
  CHECK(findings[2].kind == FindingKind::kSettling);
  CHECK(findings[2].transition == Transition::kRaised);
  CHECK(monitor.Snapshot().settling);
}

TEST_CASE("gross packs are reported as one outlier burst and kept out of the baseline",
          "[monitor]") {
  LineMonitor monitor("oats-1", OatsLine());
  RandomSource rng(5);
  std::vector<Finding> findings;
  for (std::int64_t i = 0; i < 600; ++i) {
    double x = kLevel + kSigma * rng.Normal();
    if (i == 100 || i == 103 || i == 400) x = 0.0;  // empty packs
    if (i == 401) x = 1006.0;                       // a double pack
    monitor.Push(MakePack(i, x, kStartMs + i * kStepMs), &findings);
  }
  const auto outliers = Only(findings, FindingKind::kOutlier);
  REQUIRE(outliers.size() == 4);  // two bursts, each raised and cleared
  CHECK(outliers[0].at == 100);
  CHECK(outliers[0].detector == "gross_pack");
  CHECK(outliers[1].transition == Transition::kCleared);
  CHECK(*outliers[1].end == 103);
  CHECK(*outliers[1].size_g == 2.0);  // packs in the burst
  CHECK(outliers[2].at == 400);
  CHECK(*outliers[3].end == 401);
  CHECK(monitor.Snapshot().baseline_level_g == Approx(kLevel).margin(0.5));
}

TEST_CASE("plant notices a quiet line from the other lines' record times", "[monitor][plant]") {
  LineSettings settings = OatsLine();
  PlantSettings plant_settings;
  plant_settings.defaults = settings;
  Plant plant(plant_settings);
  std::vector<Finding> findings;
  RandomSource rng(3);
  std::int64_t index = 0;
  for (int i = 0; i < 200; ++i) {
    const std::int64_t t = kStartMs + i * kStepMs;
    RecordView a{"oats-1", kNoHead, true, t, kLevel + kSigma * rng.Normal(), PackStatus::kOk};
    plant.Accept(a, index++, t, &findings);
    if (i < 50) {  // honey-2 stops after 50 packs
      RecordView b{"honey-2", kNoHead, true, t, 343.0 + rng.Normal(), PackStatus::kOk};
      plant.Accept(b, index++, t, &findings);
    }
  }
  const auto silences = Only(findings, FindingKind::kSilence);
  REQUIRE(silences.size() == 1);
  CHECK(silences[0].line == "honey-2");
  CHECK(silences[0].transition == Transition::kRaised);
  CHECK(*silences[0].onset == 99);  // honey-2's last record
  // Raised at the first oats-1 record more than 20 s after honey-2's last pack.
  CHECK(silences[0].at_time_ms > kStartMs + 49 * kStepMs + 20'000);
  CHECK(silences[0].at_time_ms <= kStartMs + 49 * kStepMs + 20'000 + kStepMs);
  CHECK(plant.line_count() == 2);
}

TEST_CASE("plant refuses new lines beyond its limit", "[monitor][plant]") {
  PlantSettings settings;
  settings.max_lines = 2;
  Plant plant(settings);
  std::vector<Finding> findings;
  RecordView r{"a", kNoHead, true, kStartMs, 500.0, PackStatus::kOk};
  CHECK(plant.Accept(r, 0, 0, &findings) == Plant::Accepted::kYes);
  r.line = "b";
  CHECK(plant.Accept(r, 1, 0, &findings) == Plant::Accepted::kYes);
  r.line = "c";
  CHECK(plant.Accept(r, 2, 0, &findings) == Plant::Accepted::kTooManyLines);
  r.line = "a";
  CHECK(plant.Accept(r, 3, 0, &findings) == Plant::Accepted::kYes);
}

namespace {
struct RecordingListener : IngestListener {
  std::vector<std::int64_t> pack_indexes;
  std::vector<RecordProblem> problems;
  void OnPack(std::string_view, const Pack& pack) override { pack_indexes.push_back(pack.index); }
  void OnProblem(const RecordProblem& p) override { problems.push_back(p); }
};
}  // namespace

TEST_CASE("stream ingest numbers data records the replay way", "[monitor][ingest]") {
  Plant plant(PlantSettings{});
  RecordingListener listener;
  StreamIngest ingest(plant, listener, 64);
  std::vector<Finding> findings;
  const std::string feed =
      "time,line,head,weight\r\n"
      "2026-03-02T06:00:00.000Z,oats-1,0,503.1\r\n"
      "\r\n"                                         // blank: no index
      "2026-03-02T06:00:00.500Z,oats-1,1,abc\r\n"    // #1 malformed
      "2026-03-02T06:00:01.000Z,oats-1,2,502.7\r\n"  // #2
      + std::string(100, 'x') +
      "\r\n"                                      // #3 over-long
      "2026-03-02T06:00:01.500Z,oats-1,3,504.0";  // #4, unterminated
  // Byte by byte, to exercise the framer's carry-over.
  for (char c : feed) ingest.Feed(std::string_view(&c, 1), 0, &findings);
  ingest.Finish(0, &findings);
  CHECK(listener.pack_indexes == std::vector<std::int64_t>{0, 2, 4});
  REQUIRE(listener.problems.size() == 2);
  CHECK(listener.problems[0].index == 1);
  CHECK(listener.problems[0].error == RecordError::kBadWeight);
  CHECK(listener.problems[1].index == 3);
  CHECK(listener.problems[1].error == RecordError::kTooLong);
  CHECK(ingest.counters().records == 5);
  CHECK(ingest.counters().accepted == 3);
  CHECK(ingest.counters().malformed == 2);
}

TEST_CASE("a hunting filler gives one oscillation, not a string of shifts", "[monitor]") {
  LineMonitor monitor("honey-2", OatsLine());
  RandomSource rng(40);
  std::vector<Finding> findings;
  for (std::int64_t i = 0; i < 4000; ++i) {
    double x = kLevel + kSigma * rng.Normal();
    if (i >= 1000) x += 2.5 * kSigma * std::sin(2.0 * 3.141592653589793 * (i - 1000) / 60.0);
    monitor.Push(MakePack(i, x, kStartMs + i * kStepMs), &findings);
  }
  const auto swings = Only(findings, FindingKind::kOscillation);
  REQUIRE_FALSE(swings.empty());
  CHECK(swings[0].transition == Transition::kRaised);
  REQUIRE(swings[0].period_packs.has_value());
  CHECK(*swings[0].period_packs == Approx(60.0).epsilon(0.35));
  std::int64_t shifts_after = 0;
  for (const auto& f : Only(findings, FindingKind::kShift)) {
    if (f.transition == Transition::kRaised && f.at > swings[0].at) ++shifts_after;
  }
  CHECK(shifts_after == 0);
  CHECK(Only(findings, FindingKind::kShift).size() <= 4);  // at most two raise/clear pairs
}

TEST_CASE("a ramp ends up reported as a drift", "[monitor]") {
  LineMonitor monitor("oats-1", OatsLine());
  RandomSource rng(200);
  std::vector<Finding> findings;
  for (std::int64_t i = 0; i < 2000; ++i) {
    double x = kLevel + kSigma * rng.Normal();
    if (i >= 1000) x -= kSigma * static_cast<double>(i - 1000) / 200.0;  // 1 sigma per 200 packs
    monitor.Push(MakePack(i, x, kStartMs + i * kStepMs), &findings);
  }
  const auto drifts = Only(findings, FindingKind::kDrift);
  REQUIRE_FALSE(drifts.empty());
  CHECK(drifts[0].transition == Transition::kRaised);
  CHECK(drifts[0].at < 1600);
  REQUIRE(drifts[0].slope_g_per_h.has_value());
  // True slope: 1.6 g per 200 packs at 7200 packs per hour = −57.6 g/h.
  CHECK(*drifts[0].slope_g_per_h < -20.0);
  CHECK(*drifts[0].slope_g_per_h > -120.0);
}

TEST_CASE("a whole-line step blames no single head", "[monitor]") {
  LineSettings settings = OatsLine();
  settings.heads = 12;
  LineMonitor monitor("oats-1", settings);
  RandomSource rng(12);
  std::vector<Finding> findings;
  for (std::int64_t i = 0; i < 4000; ++i) {
    double x = kLevel + kSigma * rng.Normal();
    if (i >= 1500) x -= 1.5 * kSigma;
    Pack p = MakePack(i, x, kStartMs + i * kStepMs);
    p.head = static_cast<int>(i % 12);
    monitor.Push(p, &findings);
  }
  CHECK_FALSE(Only(findings, FindingKind::kShift).empty());
  for (const auto& f : Only(findings, FindingKind::kOscillation)) {
    INFO("oscillation at " << f.at << " by " << f.detector);
    CHECK_FALSE(f.head.has_value());
  }
}
