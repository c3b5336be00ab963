// line_monitor_checkpoint_test.cpp — restart without amnesia: a LineMonitor or
// a whole Plant saved part way through a feed, passed through the blob codec,
// restored into fresh objects and fed the rest finds exactly what an
// uninterrupted one finds (every field of every finding, every lot figure).
// The reference is the uninterrupted run of the same code on the same packs.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <memory>
#include <string>
#include <vector>

#include "core/monitor/line_monitor.h"
#include "core/monitor/plant.h"
#include "core/sim/random_source.h"
#include "io/checkpoint_codec.h"
#include "io/rule_table_loader.h"

namespace heft {
namespace {

constexpr std::int64_t kStartMs = 1'772'431'200'000;  // 2026-03-02T06:00Z
constexpr std::int64_t kStepMs = 500;                 // 120 packs a minute
constexpr int kHeads = 12;
constexpr double kLevel = 503.0;
constexpr double kSigma = 1.6;

LineSettings Oats() {
  LineSettings s;
  s.nominal_g = 500.0;
  s.target_g = 503.0;
  s.heads = kHeads;
  s.baseline_packs = 200;
  s.silence_ms = 20'000;
  s.rules = "none";
  return s;
}

// A 12-head line (AR(1) noise, φ 0.3) with something for every detector: a
// wild pack, a gross one, a +2σ step from 1500 to 2600, a stuck sensor at
// 3000, one head 3σ off from 3300 to 3800, and a 1σ cycle of 40 packs from 4200.
std::vector<Pack> Feed(int n = 5200) {
  RandomSource rng(20260302);
  std::vector<Pack> packs;
  double ar = 0.0;
  for (int i = 0; i < n; ++i) {
    ar = 0.3 * ar + std::sqrt(1.0 - 0.09) * rng.Normal();
    const int head = i % kHeads;
    double x = kLevel + 0.3 * kSigma * std::sin(head) + kSigma * ar;
    if (i >= 1500 && i < 2600) x += 2.0 * kSigma;
    if (i == 1000) x += 9.0 * kSigma;
    if (i == 1200) x = 20.0;
    if (i >= 3000 && i < 3012) x = 504.25;
    if (i >= 3300 && i < 3800 && head == 5) x += 3.0 * kSigma;
    if (i >= 4200) x += kSigma * std::sin(2.0 * 3.14159265358979 * i / 40.0);
    Pack p;
    p.index = i;
    p.time_ms = kStartMs + i * kStepMs;
    p.grams = x;
    p.head = head;
    packs.push_back(p);
  }
  return packs;
}

std::string Describe(const Finding& f) {
  auto opt_i = [](const std::optional<std::int64_t>& v) {
    return v ? std::to_string(*v) : std::string("-");
  };
  auto opt_d = [](const std::optional<double>& v) {
    if (!v) return std::string("-");
    char text[40];
    std::snprintf(text, sizeof text, "%.17g", *v);
    return std::string(text);
  };
  return std::string(TransitionName(f.transition)) + " " + std::string(KindName(f.kind)) + " " +
         std::string(SeverityName(f.severity)) + " " + f.line + " at " + std::to_string(f.at) +
         " t " + std::to_string(f.at_time_ms) + " onset " + opt_i(f.onset) + " " +
         opt_i(f.onset_time_ms) + " end " + opt_i(f.end) + " size " + opt_d(f.size_g) + " " +
         opt_d(f.size_sigma) + " level " + opt_d(f.level_g) + " period " + opt_d(f.period_packs) +
         " " + opt_d(f.period_s) + " head " + (f.head ? std::to_string(*f.head) : "-") + " slope " +
         opt_d(f.slope_g_per_h) + " " + f.detector;
}

std::vector<std::string> Describe(const std::vector<Finding>& findings) {
  std::vector<std::string> out;
  for (const Finding& f : findings) out.push_back(Describe(f));
  return out;
}

// Through the blob and back, as heftd stores it.
LineMonitorCheckpoint RoundTrip(const LineMonitorCheckpoint& c) {
  LineCheckpoint line;
  line.line = "oats-1";
  line.monitor = c;
  LineCheckpoint back;
  const Status s = DecodeLineCheckpoint(EncodeLineCheckpoint(line), &back);
  REQUIRE(s.ok());
  return back.monitor;
}

std::vector<Finding> Whole(const LineSettings& settings, const std::vector<Pack>& packs) {
  LineMonitor m("oats-1", settings);
  std::vector<Finding> out;
  for (const Pack& p : packs) m.Push(p, &out);
  return out;
}

// Fed up to `at`, checkpointed, restored into a fresh monitor, fed the rest.
std::vector<Finding> Split(const LineSettings& settings, const std::vector<Pack>& packs,
                           std::size_t at, LineMonitorCheckpoint* saved = nullptr) {
  std::vector<Finding> out;
  auto first = std::make_unique<LineMonitor>("oats-1", settings);
  for (std::size_t i = 0; i < at; ++i) first->Push(packs[i], &out);
  const LineMonitorCheckpoint c = RoundTrip(first->SaveCheckpoint());
  if (saved != nullptr) *saved = c;
  first.reset();
  LineMonitor second("oats-1", settings);
  const Status s = second.RestoreCheckpoint(c);
  REQUIRE(s.ok());
  for (std::size_t i = at; i < packs.size(); ++i) second.Push(packs[i], &out);
  return out;
}

bool Has(const std::vector<Finding>& findings, FindingKind kind, Transition transition) {
  for (const Finding& f : findings) {
    if (f.kind == kind && f.transition == transition) return true;
  }
  return false;
}

}  // namespace

TEST_CASE("checkpoint: the test feed exercises the detectors it is meant to", "[checkpoint]") {
  const std::vector<Finding> all = Whole(Oats(), Feed());
  for (const std::string& line : Describe(all)) UNSCOPED_INFO(line);
  CHECK(Has(all, FindingKind::kSettling, Transition::kCleared));
  CHECK(Has(all, FindingKind::kShift, Transition::kRaised));
  CHECK(Has(all, FindingKind::kShift, Transition::kCleared));
  CHECK(Has(all, FindingKind::kOutlier, Transition::kRaised));
  CHECK(Has(all, FindingKind::kStuck, Transition::kRaised));
  CHECK(Has(all, FindingKind::kOscillation, Transition::kRaised));
}

TEST_CASE("checkpoint: a restored monitor finds exactly what an uninterrupted one does",
          "[checkpoint]") {
  const LineSettings settings = Oats();
  const std::vector<Pack> packs = Feed();
  const std::vector<std::string> whole = Describe(Whole(settings, packs));
  // Settling (100), just settled, before the step, shift open (1800: raised near 1510,
  // clears after 2600), stuck open (3005), head fault open (3500), cycle running (4700).
  for (std::size_t at : {1, 100, 260, 1000, 1300, 1800, 2550, 3005, 3500, 4700, 5199}) {
    DYNAMIC_SECTION("break after " << at << " packs") {
      LineMonitorCheckpoint saved;
      const std::vector<std::string> split = Describe(Split(settings, packs, at, &saved));
      if (at == 100) CHECK_FALSE(saved.running);
      if (at == 1800) CHECK(saved.open[static_cast<int>(FindingKind::kShift)]);
      CHECK(split == whole);
    }
  }
}

TEST_CASE("checkpoint: saved again and again along the feed, still the same findings",
          "[checkpoint]") {
  const LineSettings settings = Oats();
  const std::vector<Pack> packs = Feed();
  const std::vector<std::string> whole = Describe(Whole(settings, packs));
  std::vector<Finding> out;
  auto m = std::make_unique<LineMonitor>("oats-1", settings);
  for (std::size_t i = 0; i < packs.size(); ++i) {
    if (i % 97 == 96) {
      const LineMonitorCheckpoint c = RoundTrip(m->SaveCheckpoint());
      m = std::make_unique<LineMonitor>("oats-1", settings);
      REQUIRE(m->RestoreCheckpoint(c).ok());
    }
    m->Push(packs[i], &out);
  }
  CHECK(Describe(out) == whole);
}

TEST_CASE("checkpoint: a stop longer than the silence gap settles anew, as without a restart",
          "[checkpoint]") {
  const LineSettings settings = Oats();
  std::vector<Pack> packs = Feed(3000);
  // The line stops after pack 1800 (shift open) for 5 minutes.
  for (std::size_t i = 1800; i < packs.size(); ++i) packs[i].time_ms += 300'000;
  const std::vector<Finding> whole = Whole(settings, packs);
  const std::vector<Finding> split = Split(settings, packs, 1800);
  CHECK(Describe(split) == Describe(whole));
  // What "as usual" is: at the first pack after the stop, silence is raised and
  // cleared, the open shift is closed by the restart, and settling begins.
  std::vector<Finding> at_resume;
  for (const Finding& f : split) {
    if (f.at == 1800) at_resume.push_back(f);
  }
  REQUIRE(at_resume.size() >= 4);
  CHECK(at_resume[0].kind == FindingKind::kSilence);
  CHECK(at_resume[0].transition == Transition::kRaised);
  CHECK(at_resume[1].kind == FindingKind::kSilence);
  CHECK(at_resume[1].transition == Transition::kCleared);
  CHECK(at_resume[2].kind == FindingKind::kShift);
  CHECK(at_resume[2].transition == Transition::kCleared);
  CHECK(at_resume[2].detector == "restart");
  CHECK(at_resume.back().kind == FindingKind::kSettling);
  CHECK(at_resume.back().transition == Transition::kRaised);
}

TEST_CASE("checkpoint: changed targets or detection settings discard the monitor's checkpoint",
          "[checkpoint]") {
  const std::vector<Pack> packs = Feed(1800);
  LineMonitor first("oats-1", Oats());
  std::vector<Finding> out;
  for (const Pack& p : packs) first.Push(p, &out);
  const LineMonitorCheckpoint c = first.SaveCheckpoint();
  REQUIRE(c.running);

  LineSettings new_target = Oats();
  new_target.target_g = 504.0;
  LineSettings new_budget = Oats();
  new_budget.false_alarms_per_day = 0.5;
  for (const LineSettings& changed : {new_target, new_budget}) {
    LineMonitor second("oats-1", changed);
    const Status s = second.RestoreCheckpoint(c);
    CHECK_FALSE(s.ok());
    CHECK(s.message().find("settings changed") != std::string::npos);
    // The fresh monitor is untouched: its first pack starts settling.
    std::vector<Finding> next;
    second.Push(packs.back(), &next);
    REQUIRE(next.size() == 1);
    CHECK(next[0].kind == FindingKind::kSettling);
    CHECK(next[0].transition == Transition::kRaised);
  }
  // Settings that do not shape the detectors (product name) keep it.
  LineSettings renamed = Oats();
  renamed.product = "Rolled oats 500 g (new label)";
  LineMonitor third("oats-1", renamed);
  CHECK(third.RestoreCheckpoint(c).ok());
  CHECK(third.is_open(FindingKind::kShift));
  // A monitor that has already taken packs refuses.
  CHECK_FALSE(first.RestoreCheckpoint(c).ok());
}

TEST_CASE("checkpoint codec: damaged or foreign blobs are refused with a reason", "[checkpoint]") {
  LineMonitor m("oats-1", Oats());
  std::vector<Finding> out;
  for (const Pack& p : Feed(600)) m.Push(p, &out);
  LineCheckpoint c;
  c.line = "oats-1";
  c.monitor = m.SaveCheckpoint();
  const std::string blob = EncodeLineCheckpoint(c);
  LineCheckpoint back;
  REQUIRE(DecodeLineCheckpoint(blob, &back).ok());
  CHECK(EncodeLineCheckpoint(back) == blob);  // every field came back bit for bit

  CHECK(DecodeLineCheckpoint("", &back).message() == "not a heft line checkpoint");
  CHECK(DecodeLineCheckpoint(blob.substr(0, blob.size() / 2), &back).message().find("checksum") !=
        std::string::npos);
  std::string flipped = blob;
  flipped[blob.size() / 2] ^= 0x10;
  CHECK(DecodeLineCheckpoint(flipped, &back).message().find("checksum") != std::string::npos);
  std::string future = blob;
  future[4] = 9;
  CHECK(DecodeLineCheckpoint(future, &back).message() ==
        "checkpoint format 9, this heft reads " + std::to_string(kLineCheckpointFormat));
  // Every truncation (checksum recomputed, so the parser itself is tested) fails cleanly.
  for (std::size_t n = 8; n < blob.size() - 8; n += 37) {
    std::string cut = blob.substr(0, n);
    std::uint64_t h = 14695981039346656037ull;
    for (unsigned char ch : cut) {
      h ^= ch;
      h *= 1099511628211ull;
    }
    for (int i = 0; i < 8; ++i) cut.push_back(static_cast<char>((h >> (8 * i)) & 0xff));
    CHECK_FALSE(DecodeLineCheckpoint(cut, &back).ok());
  }
}

namespace {

std::shared_ptr<const comply::RuleTable> EuTable() {
  auto table = std::make_shared<comply::RuleTable>();
  std::vector<std::string> errors;
  REQUIRE(LoadRuleTableFile(std::string(HEFT_SOURCE_DIR) + "/config/rules/eu-average-quantity.yaml",
                            table.get(), &errors)
              .ok());
  return table;
}

// Two lines; oats-1 keeps count lots of 1000 packs and fills close to nominal
// (mean 500.6 g, σ 4 g) so compliance warnings come and go.
PlantSettings TwoLines(comply::LotBoundary boundary = comply::LotBoundary::kCount) {
  PlantSettings settings;
  settings.rule_tables.emplace("eu", EuTable());
  settings.defaults.baseline_packs = 100;
  settings.defaults.rules = "none";
  LineSettings oats = settings.defaults;
  oats.nominal_g = 500.0;
  oats.target_g = 500.6;
  oats.heads = 4;
  oats.rules = "eu";
  oats.lots.boundary = boundary;
  oats.lots.packs_per_lot = 1000;
  oats.cost_per_kg = 2.4;
  settings.lines.emplace("oats-1", oats);
  LineSettings honey = settings.defaults;
  honey.nominal_g = 340.0;
  settings.lines.emplace("honey-2", honey);
  return settings;
}

struct PlantRun {
  std::vector<std::string> findings;
  std::vector<LotReport> lots;
};

void FeedPlant(Plant& plant, int from, int to, std::int64_t gap_after_ms, PlantRun* run) {
  RandomSource rng(7);
  for (int i = 0; i < from; ++i) rng.Normal(), rng.Normal();  // same noise as an unbroken feed
  std::vector<Finding> out;
  for (int i = from; i < to; ++i) {
    const std::int64_t t = kStartMs + i * kStepMs + gap_after_ms;
    const double drift = i > 2000 && i < 3200 ? -0.004 * (i - 2000) : 0.0;
    RecordView oats{"oats-1", i % 4, true, t, 500.6 + drift + 4.0 * rng.Normal(), PackStatus::kOk};
    RecordView honey{"honey-2", i % 4, true, t, 342.0 + 0.8 * rng.Normal(), PackStatus::kOk};
    plant.Accept(oats, 2 * i, t, &out);
    plant.Accept(honey, 2 * i + 1, t, &out);
  }
  for (const Finding& f : out) run->findings.push_back(Describe(f));
  for (LotReport& lot : plant.TakeClosedLots()) run->lots.push_back(std::move(lot));
}

std::vector<LineCheckpoint> ThroughBlobs(const std::vector<LineCheckpoint>& saved) {
  std::vector<LineCheckpoint> back;
  for (const LineCheckpoint& c : saved) {
    LineCheckpoint d;
    REQUIRE(DecodeLineCheckpoint(EncodeLineCheckpoint(c), &d).ok());
    back.push_back(std::move(d));
  }
  return back;
}

void CheckSameLots(const std::vector<LotReport>& a, const std::vector<LotReport>& b) {
  REQUIRE(a.size() == b.size());
  for (std::size_t i = 0; i < a.size(); ++i) {
    INFO("lot " << i);
    CHECK(a[i].lot_id == b[i].lot_id);
    CHECK(a[i].seq == b[i].seq);
    CHECK(a[i].partial == b[i].partial);
    CHECK(a[i].figures.count == b[i].figures.count);
    CHECK(a[i].figures.mean_g == b[i].figures.mean_g);  // exact: same arithmetic, same order
    CHECK(a[i].figures.s_g == b[i].figures.s_g);
    CHECK(a[i].figures.first_index == b[i].figures.first_index);
    CHECK(a[i].figures.last_index == b[i].figures.last_index);
    REQUIRE(a[i].verdicts.size() == b[i].verdicts.size());
    for (std::size_t v = 0; v < a[i].verdicts.size(); ++v) {
      CHECK(a[i].verdicts[v].state == b[i].verdicts[v].state);
      CHECK(a[i].verdicts[v].margin == b[i].verdicts[v].margin);
    }
  }
}

}  // namespace

TEST_CASE("checkpoint: a restored Plant continues lines and the open lot exactly",
          "[checkpoint][lots]") {
  const PlantSettings settings = TwoLines();
  PlantRun whole;
  {
    Plant plant(settings);
    FeedPlant(plant, 0, 4500, 0, &whole);
    plant.CloseAllLots(true);
    for (LotReport& lot : plant.TakeClosedLots()) whole.lots.push_back(std::move(lot));
  }
  REQUIRE(whole.lots.size() == 5);  // four full count lots and the open fifth
  bool compliance = false;
  for (const std::string& f : whole.findings)
    compliance |= f.find("compliance") != std::string::npos;
  CHECK(compliance);  // the drift gives compliance findings to carry over

  for (int at : {50, 2500, 2990, 3600}) {
    DYNAMIC_SECTION("break after " << at << " records per line") {
      PlantRun split;
      std::vector<LineCheckpoint> saved;
      {
        Plant plant(settings);
        FeedPlant(plant, 0, at, 0, &split);
        saved = ThroughBlobs(plant.SaveCheckpoints());
      }
      Plant plant(settings);
      const std::vector<Plant::RestoreNote> notes = plant.RestoreCheckpoints(saved);
      REQUIRE(notes.size() == 2);
      CHECK(notes[0].line == "oats-1");  // order of first appearance
      CHECK(notes[0].monitor_restored);
      CHECK(notes[0].lot_continued);
      CHECK(notes[1].monitor_restored);
      CHECK(plant.TakeClosedLots().empty());
      FeedPlant(plant, at, 4500, 0, &split);
      plant.CloseAllLots(true);
      for (LotReport& lot : plant.TakeClosedLots()) split.lots.push_back(std::move(lot));
      CHECK(split.findings == whole.findings);
      CheckSameLots(split.lots, whole.lots);
    }
  }
}

TEST_CASE("checkpoint: changed lot settings close the saved lot as partial at restore",
          "[checkpoint][lots]") {
  PlantRun before;
  std::vector<LineCheckpoint> saved;
  {
    Plant plant(TwoLines());
    FeedPlant(plant, 0, 2500, 0, &before);
    saved = ThroughBlobs(plant.SaveCheckpoints());
  }
  REQUIRE(before.lots.size() == 2);
  PlantSettings changed = TwoLines();
  changed.lines.find("oats-1")->second.cost_per_kg = 3.1;
  Plant plant(changed);
  const std::vector<Plant::RestoreNote> notes = plant.RestoreCheckpoints(saved);
  REQUIRE(notes.size() == 2);
  CHECK(notes[0].monitor_restored);  // cost is not a detection setting
  CHECK_FALSE(notes[0].lot_continued);
  CHECK(notes[0].lot_closed);
  CHECK(notes[0].what.find("lot settings") != std::string::npos);
  const std::vector<LotReport> closed = plant.TakeClosedLots();
  REQUIRE(closed.size() == 1);
  CHECK(closed[0].partial);
  CHECK(closed[0].seq == 3);
  CHECK(closed[0].figures.count == 500);
  CHECK(closed[0].cost_per_kg == 2.4);  // the settings the lot was kept under
  // The next pack opens a fresh lot under the new settings.
  PlantRun after;
  FeedPlant(plant, 2500, 2501, 0, &after);
  plant.CloseAllLots(true);
  const std::vector<LotReport> next = plant.TakeClosedLots();
  REQUIRE(next.size() == 1);
  CHECK(next[0].seq == 1);
  CHECK(next[0].figures.count == 1);
  CHECK(next[0].cost_per_kg == 3.1);
}

TEST_CASE("checkpoint: an hourly lot restored after its hour has passed closes by its own rule",
          "[checkpoint][lots]") {
  // 06:00 + 3000 packs × 0.5 s = 06:25; the restart resumes at 07:05 (40 min later).
  const PlantSettings settings = TwoLines(comply::LotBoundary::kHour);
  std::vector<LineCheckpoint> saved;
  PlantRun run;
  {
    Plant plant(settings);
    FeedPlant(plant, 0, 3000, 0, &run);
    saved = ThroughBlobs(plant.SaveCheckpoints());
  }
  REQUIRE(run.lots.empty());
  Plant plant(settings);
  plant.RestoreCheckpoints(saved);
  FeedPlant(plant, 3000, 3010, 40 * 60'000, &run);
  REQUIRE(run.lots.size() == 1);
  CHECK(run.lots[0].lot_id == "oats-1 2026-03-02T06:00Z");
  CHECK_FALSE(run.lots[0].partial);
  CHECK(run.lots[0].figures.count == 3000);
}

}  // namespace heft
