// demo_scenarios.cpp — Millbrook Oat Co. lines and the named scenarios.
#include "core/sim/demo_scenarios.h"

#include <algorithm>
#include <string>
#include <utility>

#include "core/sim/random_source.h"

namespace heft {

namespace {

struct LineProfile {
  std::string_view id;
  double nominal_grams;
  double level_grams;
  double sigma_grams;
  std::vector<double> head_offsets_grams;  // about 0.3 sigma spread, summing to zero
  double phi;
  double packs_per_minute;
};

const std::vector<LineProfile>& Profiles() {
  static const std::vector<LineProfile> profiles = {
      {"oats-1",
       500.0,
       503.0,
       1.6,
       {0.4, -0.3, 0.1, -0.6, 0.5, -0.2, 0.3, -0.5, 0.0, 0.6, -0.4, 0.1},
       0.3,
       60.0},
      {"oats-2",
       1000.0,
       1005.0,
       2.5,
       {-0.6, 0.8, 0.2, -0.9, 0.5, 0.0, -0.3, 0.9, -0.5, 0.3, -0.7, 0.3},
       0.3,
       45.0},
      {"honey-2", 340.0, 343.0, 1.2, {0.3, -0.4, 0.2, -0.1}, 0.2, 40.0},
  };
  return profiles;
}

const LineProfile* FindProfile(std::string_view id) {
  for (const auto& p : Profiles()) {
    if (p.id == id) return &p;
  }
  return nullptr;
}

// FNV-1a, to fold the line id into the seed.
std::uint64_t HashId(std::string_view id) {
  std::uint64_t h = 0xcbf29ce484222325ULL;
  for (unsigned char ch : id) {
    h ^= ch;
    h *= 0x100000001b3ULL;
  }
  return h;
}

constexpr double kDefaultGross = 0.0005;  // about one gross mis-fill per 2000 packs

}  // namespace

const std::vector<DemoScenarioInfo>& DemoScenarios() {
  static const std::vector<DemoScenarioInfo> scenarios = {
      {"in-control", "oats-1", "steady filling, nothing wrong (3000 packs)"},
      {"startup", "oats-1",
       "start of a run: fill starts 5 sigma low and settles (first order, tau 60 packs)"},
      {"drift", "oats-1",
       "1200 packs in control, then the level drifts down 0.00125 sigma/pack for 1500 packs"},
      {"head-off", "oats-1", "from pack 1200 one head (7 of 0..11) fills 3 sigma low"},
      {"hunting", "honey-2", "from pack 1000 the level swings +-1.5 sigma with a 40-pack period"},
      {"stop", "oats-2",
       "line stops for 90 s before pack 1500, restarts 4 sigma high and rings down"},
      {"step", "oats-2", "sudden 1.5 sigma rise in the level at pack 1500"},
      {"spread", "oats-1", "from pack 1500 the noise sd grows by a factor 1.6"},
      {"stuck", "oats-1", "packs 1500..1539: the checkweigher repeats one reading"},
      {"alternation", "honey-2", "from pack 1000 successive packs alternate +-1 sigma"},
      {"outliers", "oats-1", "in control with ten times the usual gross mis-fills (0.5 %)"},
      {"target-lowered", "oats-1",
       "the fill target is turned down from pack 600, 0.005 sigma/pack for 2400 packs (12 sigma)"},
      {"high-giveaway", "oats-1",
       "steady filling 6 g above the usual 503 g target: giveaway the safe target would save"},
  };
  return scenarios;
}

const std::vector<std::string_view>& DemoLines() {
  static const std::vector<std::string_view> lines = [] {
    std::vector<std::string_view> ids;
    for (const auto& p : Profiles()) ids.push_back(p.id);
    return ids;
  }();
  return lines;
}

Status MakeDemoScenario(std::string_view name, std::string_view line_id, std::uint64_t seed,
                        ScenarioSpec* out) {
  const auto& all = DemoScenarios();
  const auto it = std::find_if(all.begin(), all.end(),
                               [&](const DemoScenarioInfo& s) { return s.name == name; });
  if (it == all.end()) {
    return Status::Error("unknown scenario '" + std::string(name) + "' (see --list)");
  }
  const std::string_view line = line_id.empty() ? it->default_line : line_id;
  if (!IsValidLineId(line)) {
    return Status::Error("line id '" + std::string(line) +
                         "' is not 1..64 characters of A-Z a-z 0-9 _ . -");
  }
  const LineProfile* profile = FindProfile(line);
  if (profile == nullptr) profile = FindProfile(it->default_line);

  ScenarioSpec spec;
  spec.name = std::string(name);
  spec.line_id = std::string(line);
  spec.nominal_grams = profile->nominal_grams;
  spec.level_grams = profile->level_grams;
  spec.sigma_grams = profile->sigma_grams;
  spec.heads = static_cast<int>(profile->head_offsets_grams.size());
  spec.head_offsets_grams = profile->head_offsets_grams;
  spec.phi = profile->phi;
  spec.packs_per_minute = profile->packs_per_minute;
  spec.start_time_ms = kDemoStartTimeMs;
  spec.gross_probability = kDefaultGross;
  spec.seed = DeriveSeed(seed, HashId(line));
  spec.default_packs = 3000;

  const double s = spec.sigma_grams;
  auto& c = spec.conditions;
  if (name == "in-control") {
    // nothing injected
  } else if (name == "startup") {
    spec.default_packs = 2000;
    c.push_back(Condition::StartupFirstOrder(0, -5.0 * s, 60.0));
  } else if (name == "drift") {
    c.push_back(Condition::Ramp(1200, -0.00125 * s, 2700));
  } else if (name == "head-off") {
    c.push_back(Condition::HeadOff(1200, std::min(7, spec.heads - 1), -3.0 * s));
  } else if (name == "hunting") {
    c.push_back(Condition::Hunting(1000, 1.5 * s, 40.0));
  } else if (name == "stop") {
    c.push_back(Condition::Stop(1500, 90.0));
    c.push_back(Condition::StartupUnderdamped(1500, 4.0 * s, 0.35, 30.0));
  } else if (name == "step") {
    c.push_back(Condition::Step(1500, 1.5 * s));
  } else if (name == "spread") {
    c.push_back(Condition::Spread(1500, 1.6));
  } else if (name == "stuck") {
    c.push_back(Condition::Stuck(1500, 40));
  } else if (name == "alternation") {
    c.push_back(Condition::Alternation(1000, 1.0 * s));
  } else if (name == "outliers") {
    spec.gross_probability = 10.0 * kDefaultGross;
  } else if (name == "target-lowered") {
    // 12 sigma over 2400 packs: the level passes the nominal, then nears T1.
    spec.default_packs = 3600;
    c.push_back(Condition::Ramp(600, -0.005 * s, 3000));
  } else if (name == "high-giveaway") {
    spec.default_packs = 7200;  // two full hourly lots at 60 packs a minute
    spec.level_grams += 6.0;
  }
  *out = std::move(spec);
  return ValidateScenario(*out);
}

}  // namespace heft
