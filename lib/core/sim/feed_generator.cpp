// feed_generator.cpp — the simulated process behind FeedGenerator.
#include "core/sim/feed_generator.h"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <utility>

namespace heft {

namespace {
// Stream numbers for DeriveSeed: fixed forever, or old seeds change meaning.
constexpr std::uint64_t kNoiseStream = 1;
constexpr std::uint64_t kGrossStream = 2;
constexpr std::uint64_t kJitterStream = 3;
constexpr double kJitterFraction = 0.1;  // time jitter: 0..10 % of the pack interval, late only
}  // namespace

FeedGenerator::FeedGenerator(ScenarioSpec spec)
    : spec_(std::move(spec)),
      noise_(DeriveSeed(spec_.seed, kNoiseStream)),
      gross_(DeriveSeed(spec_.seed, kGrossStream)),
      jitter_(DeriveSeed(spec_.seed, kJitterStream)) {
  spec_.heads = std::clamp(spec_.heads, 1, 1000);
  if (spec_.head_offsets_grams.size() != static_cast<std::size_t>(spec_.heads)) {
    spec_.head_offsets_grams.assign(static_cast<std::size_t>(spec_.heads), 0.0);
  }
  if (!(std::fabs(spec_.phi) < 1.0)) spec_.phi = 0.0;
  if (!(spec_.sigma_grams >= 0.0)) spec_.sigma_grams = 0.0;
  if (!(spec_.packs_per_minute > 0.0)) spec_.packs_per_minute = 60.0;
  if (spec_.conditions.size() > kMaxConditions) spec_.conditions.resize(kMaxConditions);
  interval_ms_ = 60000.0 / spec_.packs_per_minute;
  innovation_scale_ = std::sqrt(1.0 - spec_.phi * spec_.phi);
}

double FeedGenerator::ConditionEffect(const Condition& c, std::int64_t i, int head) const {
  if (i < c.start_pack) return 0.0;
  const bool in_window = c.end_pack < 0 || i < c.end_pack;
  const double t = static_cast<double>(i - c.start_pack);
  switch (c.kind) {
    case ConditionKind::kStep:
      return in_window ? c.size_grams : 0.0;
    case ConditionKind::kRamp: {
      // Ramps until its end, then the level stays where it got to (nobody corrected it).
      const std::int64_t last = c.end_pack < 0 ? i : std::min(i, c.end_pack - 1);
      return c.size_grams * static_cast<double>(last - c.start_pack + 1);
    }
    case ConditionKind::kHeadOff:
      return in_window && head == c.head ? c.size_grams : 0.0;
    case ConditionKind::kHunting:
      if (!in_window || !(c.period_packs > 0.0)) return 0.0;
      return c.size_grams * std::sin(2.0 * std::numbers::pi * t / c.period_packs);
    case ConditionKind::kAlternation:
      if (!in_window) return 0.0;
      return ((i - c.start_pack) % 2 == 0) ? c.size_grams : -c.size_grams;
    case ConditionKind::kStartupFirstOrder:
      if (!(c.tau_packs > 0.0)) return 0.0;
      return c.size_grams * std::exp(-t / c.tau_packs);
    case ConditionKind::kStartupUnderdamped: {
      // Deviation of an under-damped second-order step response from its final
      // value, scaled so that it starts at size_grams:
      //   e(t) = exp(-zeta wn t) (cos(wd t) + zeta / sqrt(1 - zeta^2) sin(wd t)).
      if (!(c.zeta > 0.0 && c.zeta < 1.0 && c.period_packs > 0.0)) return 0.0;
      const double wn = 2.0 * std::numbers::pi / c.period_packs;
      const double root = std::sqrt(1.0 - c.zeta * c.zeta);
      const double wd = wn * root;
      const double envelope = std::exp(-c.zeta * wn * t);
      return c.size_grams * envelope * (std::cos(wd * t) + c.zeta / root * std::sin(wd * t));
    }
    case ConditionKind::kSpread:
    case ConditionKind::kStuck:
    case ConditionKind::kStop:
      return 0.0;
  }
  return 0.0;
}

GeneratedPack FeedGenerator::Next() {
  const std::int64_t i = index_++;
  const int head = static_cast<int>(i % spec_.heads);

  GeneratedPack out;
  double mean = spec_.level_grams + spec_.head_offsets_grams[static_cast<std::size_t>(head)];
  double sigma = spec_.sigma_grams;
  bool stuck = false;
  for (std::size_t k = 0; k < spec_.conditions.size(); ++k) {
    const Condition& c = spec_.conditions[k];
    mean += ConditionEffect(c, i, head);
    const bool in_window = i >= c.start_pack && (c.end_pack < 0 || i < c.end_pack);
    if (c.kind == ConditionKind::kSpread && in_window) sigma *= c.factor;
    if (c.kind == ConditionKind::kStuck && in_window) stuck = true;
    if (c.kind == ConditionKind::kStop && i == c.start_pack) {
      gap_ms_ += std::llround(c.stop_seconds * 1000.0);
    }
    if (c.ActiveAt(i)) out.active |= (std::uint64_t{1} << k);
  }

  // Fixed draws per pack from each stream (see the header).
  const double e = noise_.Normal();
  const double gross_u = gross_.Uniform();
  const double gross_v = gross_.Uniform();
  const double jitter_u = jitter_.Uniform();

  ar_state_ = (i == 0) ? e : spec_.phi * ar_state_ + innovation_scale_ * e;
  double value = mean + sigma * ar_state_;
  if (gross_u < spec_.gross_probability) {
    // A mis-fill 6..12 sigma off, either side (base sigma; 1 % of level if sigma is 0).
    const double base = spec_.sigma_grams > 0.0 ? spec_.sigma_grams : 0.01 * spec_.level_grams;
    const double sign = gross_v < 0.5 ? -1.0 : 1.0;
    const double size = 6.0 + 12.0 * (gross_v < 0.5 ? gross_v : gross_v - 0.5);
    value += sign * size * base;
    out.gross = true;
  }
  value = std::max(0.0, std::round(value * 10.0) / 10.0);
  if (stuck && i > 0) {
    value = last_reported_grams_;  // the sensor repeats its last reading
    out.gross = false;
  }
  last_reported_grams_ = value;

  const double nominal_ms = static_cast<double>(spec_.start_time_ms) +
                            static_cast<double>(i) * interval_ms_ + static_cast<double>(gap_ms_);
  // Late only, so no pack is stamped before the start time.
  const double jitter_ms = jitter_u * kJitterFraction * interval_ms_;
  std::int64_t time_ms = std::llround(nominal_ms + jitter_ms);
  if (i > 0 && time_ms <= last_time_ms_) time_ms = last_time_ms_ + 1;
  last_time_ms_ = time_ms;

  out.pack.index = i;
  out.pack.time_ms = time_ms;
  out.pack.grams = value;
  out.pack.head = head;
  out.true_mean_grams = mean;
  out.true_sigma_grams = sigma;
  return out;
}

}  // namespace heft
