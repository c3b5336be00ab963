// Scenario-level checks of LineMonitor on simulated feeds with known truth
// (core/sim FeedGenerator; invented 12-head line, head offsets ≈ 0.3σ, φ = 0.15,
// 120 packs/min). Fixed seeds; the full statistics are in `heft score`.
#include "core/monitor/line_monitor.h"

#include <catch2/catch.hpp>

#include <cmath>
#include <optional>
#include <vector>

#include "core/sim/feed_generator.h"
#include "core/sim/random_source.h"

using namespace heft;

namespace {
constexpr double kSigma = 1.6;

ScenarioSpec Line(std::uint64_t seed) {
  ScenarioSpec s;
  s.nominal_grams = 500.0;
  s.level_grams = 503.0;
  s.sigma_grams = kSigma;
  s.heads = 12;
  s.head_offsets_grams = {0.5, -0.4, 0.2, -0.7, 0.6, -0.3, 0.4, -0.6, 0.0, 0.7, -0.5, 0.1};
  s.phi = 0.15;
  s.packs_per_minute = 120.0;
  s.start_time_ms = 1772431200000;
  s.gross_probability = 0.0005;
  s.seed = seed;
  return s;
}

LineSettings Settings() {
  LineSettings ls;
  ls.nominal_g = 500.0;
  ls.heads = 12;
  return ls;
}

// First finding of `kind` raised at or after `from`.
std::optional<Finding> Run(const ScenarioSpec& spec, std::int64_t packs, FindingKind kind,
                           std::int64_t from, std::vector<Finding>* all = nullptr) {
  FeedGenerator gen(spec);
  LineMonitor monitor("oats-1", Settings());
  std::vector<Finding> found;
  std::optional<Finding> first;
  for (std::int64_t i = 0; i < packs; ++i) {
    found.clear();
    monitor.Push(gen.Next().pack, &found);
    for (const Finding& f : found) {
      if (all) all->push_back(f);
      if (!first && f.kind == kind && f.transition == Transition::kRaised && f.at >= from)
        first = f;
    }
  }
  return first;
}
}  // namespace

TEST_CASE("scenario: in control with head offsets and autocorrelation stays quiet",
          "[monitor][scenario]") {
  std::vector<Finding> all;
  Run(Line(101), 60000, FindingKind::kShift, 0, &all);
  int process_alarms = 0;
  for (const Finding& f : all) {
    if (f.transition != Transition::kRaised) continue;
    if (f.kind == FindingKind::kSettling || f.kind == FindingKind::kOutlier) continue;
    ++process_alarms;
    INFO(KindName(f.kind) << " at " << f.at << " by " << f.detector);
    CHECK(false);
  }
  CHECK(process_alarms == 0);
}

TEST_CASE("scenario: a 2-sigma step is a shift within 30 packs", "[monitor][scenario]") {
  ScenarioSpec spec = Line(202);
  spec.conditions.push_back(Condition::Step(3000, 2.0 * kSigma));
  const auto f = Run(spec, 3300, FindingKind::kShift, 3000);
  REQUIRE(f.has_value());
  CHECK(f->at - 3000 <= 30);
  CHECK(*f->onset >= 2985);
  CHECK(*f->size_sigma == Approx(2.0).margin(0.8));
}

TEST_CASE("scenario: a slow ramp is found and its slope reported in g/h", "[monitor][scenario]") {
  ScenarioSpec spec = Line(303);
  spec.conditions.push_back(Condition::Ramp(3000, kSigma / 200.0));
  std::vector<Finding> all;
  Run(spec, 3600, FindingKind::kDrift, 3000, &all);
  std::optional<Finding> first;
  for (const Finding& f : all) {
    if (!first && f.transition == Transition::kRaised && f.at >= 3000 &&
        (f.kind == FindingKind::kShift || f.kind == FindingKind::kDrift)) {
      first = f;
    }
  }
  REQUIRE(first.has_value());
  CHECK(first->at - 3000 <= 300);
  CHECK(*first->size_sigma > 0.3);
  if (first->kind == FindingKind::kDrift) {
    // 1.6 g / 200 packs × 7200 packs/h = 57.6 g/h.
    REQUIRE(first->slope_g_per_h.has_value());
    CHECK(*first->slope_g_per_h == Approx(57.6).epsilon(0.6));
  }
}

TEST_CASE("scenario: one head 3 sigma low is an oscillation naming that head",
          "[monitor][scenario]") {
  ScenarioSpec spec = Line(404);
  spec.conditions.push_back(Condition::HeadOff(3000, 7, -3.0 * kSigma));
  const auto f = Run(spec, 3600, FindingKind::kOscillation, 3000);
  REQUIRE(f.has_value());
  CHECK(f->head == 7);
  CHECK(f->period_packs == Approx(12.0));
  CHECK(*f->size_g < -2.0 * kSigma);
  CHECK(f->at - 3000 < 200);
}

TEST_CASE("scenario: one bad head, once reported, does not also chatter as spread",
          "[monitor][scenario]") {
  // Three hours of a head 3 sigma low at 120 packs/min. Before the spread detector saw
  // that head re-centred, the extra spread it adds was raised and cleared about every
  // 700 packs (the 30-minute soak: 148 spread findings on 7 such lines).
  ScenarioSpec spec = Line(405);
  spec.conditions.push_back(Condition::HeadOff(1200, 7, -3.0 * kSigma));
  std::vector<Finding> all;
  Run(spec, 21600, FindingKind::kOscillation, 1200, &all);
  int oscillation = 0, spread = 0;
  for (const Finding& f : all) {
    if (f.transition != Transition::kRaised) continue;
    oscillation += f.kind == FindingKind::kOscillation;
    spread += f.kind == FindingKind::kSpread;
  }
  CHECK(oscillation == 1);
  CHECK(spread <= 1);
}

TEST_CASE("scenario: wider spread, once reported, does not also read as shifts or heads",
          "[monitor][scenario]") {
  // Three hours with the noise 1.6 times wider from pack 1200. Judged against the old
  // sigma, the mean and head detectors raised shifts and bad heads that were only the
  // wider scatter (the 30-minute soak: 30 shifts and 20 oscillations on 7 such lines).
  std::vector<Finding> all;
  int spread = 0, mean = 0, oscillation = 0;
  for (std::uint64_t seed : {406, 407, 408}) {
    ScenarioSpec spec = Line(seed);
    spec.conditions.push_back(Condition::Spread(1200, 1.6));
    all.clear();
    Run(spec, 21600, FindingKind::kSpread, 1200, &all);
    for (const Finding& f : all) {
      if (f.transition != Transition::kRaised || f.at < 1200) continue;
      spread += f.kind == FindingKind::kSpread;
      mean += f.kind == FindingKind::kShift || f.kind == FindingKind::kDrift;
      oscillation += f.kind == FindingKind::kOscillation;
    }
  }
  CHECK(spread >= 3);
  CHECK(mean + oscillation <= 1);
}

TEST_CASE("scenario: a hunting filler's 40-pack swing is found with its period",
          "[monitor][scenario]") {
  ScenarioSpec spec = Line(505);
  spec.conditions.push_back(Condition::Hunting(3000, 1.5 * kSigma, 40.0));
  std::vector<Finding> all;
  Run(spec, 4000, FindingKind::kOscillation, 3000, &all);
  std::optional<Finding> periodic;
  for (const Finding& f : all) {
    if (!periodic && f.kind == FindingKind::kOscillation && f.period_packs) periodic = f;
  }
  REQUIRE(periodic.has_value());
  CHECK(*periodic->period_packs == Approx(40.0).epsilon(0.1));
  REQUIRE(periodic->period_s.has_value());
  CHECK(*periodic->period_s == Approx(20.0).epsilon(0.15));  // 40 packs at 2 per second
}

TEST_CASE("scenario: alternating packs are an oscillation of period 2", "[monitor][scenario]") {
  ScenarioSpec spec = Line(606);
  spec.conditions.push_back(Condition::Alternation(3000, kSigma));
  const auto f = Run(spec, 3600, FindingKind::kOscillation, 3000);
  REQUIRE(f.has_value());
  REQUIRE(f->period_packs.has_value());
  CHECK(*f->period_packs == Approx(2.0).epsilon(0.1));
}

TEST_CASE("scenario: a head pattern's period is read from the packs since its onset",
          "[monitor][scenario]") {
  // On a 12-head filler alternating packs are every other head high; a head CUSUM
  // often fires first. Its period used to come from the whole 512-pack window, most
  // of it from before the change: 22 of these 30 alternation runs got period 2 then
  // (`heft score`, 300 seeds: 88 % then, 99 % now). Some head CUSUMs fire after
  // only a few turns, when a head or two of the alternation is still lost in the noise.
  int alternation_right = 0, head_right = 0;
  const int seeds = 30;
  for (int seed = 0; seed < seeds; ++seed) {
    ScenarioSpec alternating = Line(700 + static_cast<std::uint64_t>(seed));
    alternating.conditions.push_back(Condition::Alternation(3000, kSigma));
    const auto a = Run(alternating, 3600, FindingKind::kOscillation, 3000);
    alternation_right += a && a->period_packs && std::fabs(*a->period_packs - 2.0) < 0.2;
    ScenarioSpec one_head = Line(800 + static_cast<std::uint64_t>(seed));
    one_head.conditions.push_back(Condition::HeadOff(3000, 4, 3.0 * kSigma));
    const auto h = Run(one_head, 3600, FindingKind::kOscillation, 3000);
    head_right += h && h->period_packs && *h->period_packs == 12.0 && h->head == 4;
  }
  CHECK(alternation_right >= seeds - 4);
  CHECK(head_right >= seeds - 1);
}

TEST_CASE("scenario: start-up transients settle at the fitted settling time, alarms held",
          "[monitor][scenario]") {
  for (int model = 0; model < 2; ++model) {
    ScenarioSpec spec = Line(707 + model);
    const Condition c = model == 0 ? Condition::StartupFirstOrder(0, -8.0 * kSigma, 50.0)
                                   : Condition::StartupUnderdamped(0, 6.0 * kSigma, 0.3, 40.0);
    spec.conditions.push_back(c);
    std::vector<Finding> all;
    Run(spec, 1500, FindingKind::kSettling, 0, &all);
    const double truth = static_cast<double>(c.LabelEnd());  // 200 and 84.9 packs
    std::optional<Finding> cleared;
    for (const Finding& f : all) {
      if (f.kind == FindingKind::kSettling && f.transition == Transition::kCleared) cleared = f;
      if (!cleared) {
        CHECK(f.kind != FindingKind::kShift);
        CHECK(f.kind != FindingKind::kDrift);
        CHECK(f.kind != FindingKind::kOscillation);
      }
    }
    REQUIRE(cleared.has_value());
    INFO("model " << model << " truth " << truth << " estimate " << *cleared->end);
    CHECK(std::fabs(static_cast<double>(*cleared->end) - truth) <= std::max(20.0, 0.2 * truth));
  }
}

TEST_CASE("scenario: stuck sensor and rising spread", "[monitor][scenario]") {
  ScenarioSpec stuck = Line(808);
  stuck.conditions.push_back(Condition::Stuck(3000, 40));
  std::vector<Finding> all;
  const auto s = Run(stuck, 3200, FindingKind::kStuck, 3000, &all);
  REQUIRE(s.has_value());
  CHECK(s->at - 3000 < 12);
  CHECK(*s->onset >= 2999);
  bool released = false;
  for (const Finding& f : all) {
    released |= f.kind == FindingKind::kStuck && f.transition == Transition::kCleared;
  }
  CHECK(released);

  ScenarioSpec spread = Line(909);
  spread.conditions.push_back(Condition::Spread(3000, 1.6));
  const auto w = Run(spread, 3600, FindingKind::kSpread, 3000);
  REQUIRE(w.has_value());
  CHECK(w->at - 3000 < 300);
}

TEST_CASE("scenario: a long settling raises an alarm, a burst of gross packs escalates",
          "[monitor][scenario]") {
  LineSettings ls = Settings();
  ls.settling_alarm_packs = 400;
  LineMonitor monitor("oats-1", ls);
  std::vector<Finding> found;
  RandomSource rng(12);
  // The level keeps moving for 1000 packs: never settles in 400.
  for (int i = 0; i < 600; ++i) {
    Pack p;
    p.index = i;
    p.time_ms = 1772431200000 + i * 500;
    p.grams = 503.0 + 0.02 * i + kSigma * rng.Normal();
    monitor.Push(p, &found);
  }
  bool alarm = false;
  for (const Finding& f : found) {
    alarm |= f.kind == FindingKind::kSettling && f.severity == Severity::kAlarm &&
             f.detector == "settling_limit";
  }
  CHECK(alarm);

  LineMonitor burst("oats-1", Settings());
  found.clear();
  for (int i = 0; i < 700; ++i) {
    Pack p;
    p.index = i;
    p.time_ms = 1772431200000 + i * 500;
    p.grams = (i >= 600 && i < 610 && i % 2 == 0) ? 0.0 : 503.0 + kSigma * rng.Normal();
    burst.Push(p, &found);
  }
  int escalations = 0;
  for (const Finding& f : found) {
    escalations += f.kind == FindingKind::kOutlier && f.severity == Severity::kAlarm;
  }
  CHECK(escalations == 1);
}
