// plant_reload_test.cpp — Plant::Reconfigure (SIGHUP reload): lines whose
// targets changed start again, the others keep their state.
#include <catch2/catch.hpp>

#include <cmath>
#include <random>
#include <cstdint>
#include <vector>

#include "core/monitor/plant.h"

namespace heft {
namespace {

constexpr std::int64_t kStartMs = 1'772'431'200'000;  // 2026-03-02T06:00Z

PlantSettings TwoLines(double oats_target) {
  PlantSettings settings;
  settings.defaults.baseline_packs = 60;
  settings.defaults.rules = "none";  // no lots: this test is about the monitors
  LineSettings oats = settings.defaults;
  oats.product = "Rolled oats 500 g";
  oats.nominal_g = 500.0;
  oats.target_g = oats_target;
  oats.heads = 4;
  LineSettings honey = settings.defaults;
  honey.product = "Clover honey 340 g jar";
  honey.nominal_g = 340.0;
  honey.target_g = 342.0;
  honey.heads = 4;
  settings.lines.emplace("oats-1", oats);
  settings.lines.emplace("honey-2", honey);
  return settings;
}

// In-control packs (seeded normal noise, sigma 0.8 g), both lines interleaved.
void Feed(Plant& plant, std::int64_t first, int count, std::vector<Finding>* out) {
  std::mt19937_64 rng(static_cast<std::uint64_t>(first) + 17);
  std::normal_distribution<double> noise(0.0, 0.8);
  for (int i = 0; i < count; ++i) {
    const std::int64_t n = first + i;
    const double wobble = noise(rng);
    const std::int64_t t = kStartMs + n * 500;
    RecordView oats{"oats-1", static_cast<int>(n % 4), true, t, 503.0 + wobble, PackStatus::kOk};
    RecordView honey{"honey-2", static_cast<int>(n % 4), true, t, 342.0 + wobble, PackStatus::kOk};
    plant.Accept(oats, 2 * n, t, out);
    plant.Accept(honey, 2 * n + 1, t, out);
  }
}

const LineSnapshot& Find(const std::vector<LineSnapshot>& all, const char* line) {
  for (const auto& s : all) {
    if (s.line == line) return s;
  }
  FAIL("no line " << line);
  return all.front();
}

TEST_CASE("reload re-baselines only lines whose targets changed", "[reload]") {
  Plant plant(TwoLines(503.0));
  std::vector<Finding> findings;
  Feed(plant, 0, 300, &findings);
  REQUIRE_FALSE(Find(plant.Snapshot(), "oats-1").settling);
  REQUIRE_FALSE(Find(plant.Snapshot(), "honey-2").settling);

  const auto notes = plant.Reconfigure(TwoLines(505.0));
  REQUIRE(notes.size() == 1);
  CHECK(notes[0].line == "oats-1");
  CHECK(notes[0].restarted);
  CHECK(notes[0].what == "target_g 503 -> 505");
  CHECK(plant.SettingsFor("oats-1").target_g == 505.0);

  const auto after = plant.Snapshot();
  CHECK(Find(after, "oats-1").packs == 0);  // a new monitor
  CHECK(Find(after, "honey-2").packs == 300);
  CHECK_FALSE(Find(after, "honey-2").settling);

  findings.clear();
  Feed(plant, 300, 5, &findings);
  int oats_settling = 0, honey_settling = 0;
  for (const Finding& f : findings) {
    if (f.kind == FindingKind::kSettling && f.transition == Transition::kRaised) {
      (f.line == "oats-1" ? oats_settling : honey_settling) += 1;
    }
  }
  CHECK(oats_settling == 1);   // settles again
  CHECK(honey_settling == 0);  // keeps its baseline
}

TEST_CASE("reload notes detection changes that apply after a restart", "[reload]") {
  Plant plant(TwoLines(503.0));
  std::vector<Finding> findings;
  Feed(plant, 0, 100, &findings);
  PlantSettings changed = TwoLines(503.0);
  changed.lines.at("honey-2").silence_ms = 120'000;
  changed.lines.at("oats-1").product = "Rolled oats 500 g (new bag)";  // messages only
  const auto notes = plant.Reconfigure(std::move(changed));
  REQUIRE(notes.size() == 1);
  CHECK(notes[0].line == "honey-2");
  CHECK_FALSE(notes[0].restarted);
  CHECK(notes[0].what.find("after a restart") != std::string::npos);
  CHECK(plant.SettingsFor("oats-1").product == "Rolled oats 500 g (new bag)");
  CHECK(Find(plant.Snapshot(), "honey-2").packs == 100);
}

TEST_CASE("reload: a line first seen after the reload uses the new settings", "[reload]") {
  Plant plant(TwoLines(503.0));
  PlantSettings fresh = TwoLines(503.0);
  LineSettings oats3 = fresh.defaults;
  oats3.nominal_g = 750.0;
  oats3.target_g = 754.0;
  fresh.lines.emplace("oats-3", oats3);
  CHECK(plant.Reconfigure(std::move(fresh)).empty());
  std::vector<Finding> findings;
  RecordView r{"oats-3", 0, true, kStartMs, 754.0, PackStatus::kOk};
  plant.Accept(r, 0, kStartMs, &findings);
  CHECK(plant.SettingsFor("oats-3").target_g == 754.0);
  CHECK(plant.line_count() == 1);
}

}  // namespace
}  // namespace heft
