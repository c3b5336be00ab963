// scenario.h — what a simulated feed looks like: one line's process and the
// conditions injected into it.
//
// A ScenarioSpec is a plain value read by FeedGenerator (feed_generator.h) and
// built by the demo catalogue (demo_scenarios.h), the tests and `heft feed`.
// Pack indexes are 0-based and count the packs of this one line. Thread-agnostic.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "core/model/status.h"

namespace heft {

enum class ConditionKind : std::uint8_t {
  kStep,                // level moves by size_grams from start (back again at end, if given)
  kRamp,                // level moves size_grams per pack from start; stops moving at end
  kHeadOff,             // one filler head sits size_grams away from the others
  kHunting,             // sine swing: amplitude size_grams, period period_packs
  kAlternation,         // +size, -size, +size, ... on successive packs
  kStartupFirstOrder,   // size_grams * exp(-t / tau_packs), t = packs since start
  kStartupUnderdamped,  // second-order step response: initial offset size_grams,
                        // damping ratio zeta, natural period period_packs
  kSpread,              // noise sigma multiplied by factor
  kStuck,               // the reported weight repeats the last value (start .. end)
  kStop,                // the line is silent for stop_seconds before pack start
};

// Stable lower-case names ("step", "ramp", ..., "stop") for labels and messages.
std::string_view ConditionKindName(ConditionKind kind);

struct Condition {
  ConditionKind kind = ConditionKind::kStep;
  std::int64_t start_pack = 0;
  // First pack after the condition (exclusive); -1 = lasts to the end of the feed.
  // For the start-up transients -1 means "until settled": the 2 % settling time
  // (first order 4 tau; under-damped 4 / (zeta * omega_n)), check-values.md §5.2
  // (common practice). The transient itself keeps decaying after its label ends.
  std::int64_t end_pack = -1;
  double size_grams = 0.0;  // step size, ramp slope (g/pack), head offset, amplitudes
  int head = 0;             // kHeadOff
  double period_packs = 0;  // kHunting, kStartupUnderdamped (natural period)
  double tau_packs = 0;     // kStartupFirstOrder
  double zeta = 0;          // kStartupUnderdamped, 0 < zeta < 1
  double factor = 1;        // kSpread
  double stop_seconds = 0;  // kStop

  // Builders for the usual cases.
  static Condition Step(std::int64_t start, double size_g, std::int64_t end = -1);
  static Condition Ramp(std::int64_t start, double slope_g_per_pack, std::int64_t end = -1);
  static Condition HeadOff(std::int64_t start, int head, double offset_g, std::int64_t end = -1);
  static Condition Hunting(std::int64_t start, double amplitude_g, double period_packs,
                           std::int64_t end = -1);
  static Condition Alternation(std::int64_t start, double amplitude_g, std::int64_t end = -1);
  static Condition StartupFirstOrder(std::int64_t start, double amplitude_g, double tau_packs);
  static Condition StartupUnderdamped(std::int64_t start, double amplitude_g, double zeta,
                                      double natural_period_packs);
  static Condition Spread(std::int64_t start, double factor, std::int64_t end = -1);
  static Condition Stuck(std::int64_t start, std::int64_t packs);
  static Condition Stop(std::int64_t start, double seconds);

  // The end of the truth label (exclusive), with the "until settled" default
  // resolved; -1 = open-ended.
  std::int64_t LabelEnd() const;
  bool ActiveAt(std::int64_t pack) const;
};

// At most this many conditions per scenario (truth labels are a 64-bit mask).
inline constexpr std::size_t kMaxConditions = 64;

struct ScenarioSpec {
  std::string name;  // e.g. "drift"; informational
  std::string line_id = "oats-1";
  double nominal_grams = 500.0;  // the quantity declared on the pack
  double level_grams = 503.0;    // where the filler is set (mean of the in-control process)
  double sigma_grams = 1.6;      // marginal standard deviation of the noise
  int heads = 1;
  std::vector<double> head_offsets_grams;  // one per head, or empty = all zero
  double phi = 0.0;                        // lag-1 autocorrelation of the AR(1) noise, |phi| < 1
  double packs_per_minute = 60.0;
  std::int64_t start_time_ms = 0;  // time of pack 0 (epoch ms, UTC)
  // Chance that a pack is a gross error (a mis-fill 6..12 sigma away, either side).
  double gross_probability = 0.0;
  std::uint64_t seed = 1;
  std::int64_t default_packs = 3000;  // how many packs the demo catalogue suggests
  std::vector<Condition> conditions;
};

// Checks that the spec can be generated; the message names the field and why.
Status ValidateScenario(const ScenarioSpec& spec);

// True if `id` is a valid line id in the native format: 1..64 of [A-Za-z0-9_.-].
bool IsValidLineId(std::string_view id);

}  // namespace heft
