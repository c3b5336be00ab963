// feed_generator.h — turns a ScenarioSpec into simulated checkweigher packs,
// one at a time, with the truth about each one.
//
// The model for pack i (0-based) on head i % heads:
//   weight = level + head offset + sum of condition effects + sigma_i * z_i  (+ gross error)
// where z is a unit-variance AR(1) series, z_i = phi z_{i-1} + sqrt(1 - phi^2) e_i,
// so the noise has marginal sd sigma and lag-1 autocorrelation phi; sigma_i is
// sigma times any active spread factors. Weights are rounded to 0.1 g as a
// checkweigher display would. Times advance by 60000/rate ms with 0..10 % jitter,
// plus any stop silences. A stop followed by a start-up transient at the same
// pack models a restart.
//
// Each pack draws a fixed count of numbers from three independent streams (noise,
// gross errors, time jitter), so two specs that differ only in conditions share
// the same noise: useful for comparing them. Pure and deterministic; keeps O(1)
// state. Not thread-safe: one generator per thread.
#pragma once

#include <cstdint>

#include "core/model/pack.h"
#include "core/sim/random_source.h"
#include "core/sim/scenario.h"

namespace heft {

struct GeneratedPack {
  Pack pack;                    // index, time_ms, grams (0.1 g), head
  std::uint64_t active = 0;     // bit i set: spec.conditions[i] is labelled active here
  bool gross = false;           // this pack carries a gross error
  double true_mean_grams = 0;   // level + head offset + condition effects, before noise
  double true_sigma_grams = 0;  // noise sd in force at this pack (spread included)

  bool Active(std::size_t condition) const {
    return condition < 64 && ((active >> condition) & 1u) != 0;
  }
};

class FeedGenerator {
 public:
  // `spec` should pass ValidateScenario(); out-of-range fields are clamped so
  // that a bad spec gives odd data, never undefined behaviour.
  explicit FeedGenerator(ScenarioSpec spec);

  // The next pack; the feed never ends (the caller decides how many to take).
  GeneratedPack Next();

  const ScenarioSpec& spec() const { return spec_; }
  std::int64_t next_index() const { return index_; }

 private:
  double ConditionEffect(const Condition& c, std::int64_t i, int head) const;

  ScenarioSpec spec_;
  RandomSource noise_;
  RandomSource gross_;
  RandomSource jitter_;
  double interval_ms_ = 1000.0;
  double innovation_scale_ = 1.0;  // sqrt(1 - phi^2)
  double ar_state_ = 0.0;
  std::int64_t index_ = 0;
  std::int64_t gap_ms_ = 0;  // total stop silence so far
  std::int64_t last_time_ms_ = 0;
  double last_reported_grams_ = 0.0;
};

}  // namespace heft
