#include "core/detect/run_rules.h"

#include <algorithm>
#include <bit>
#include <cmath>
#include <vector>

namespace heft {
namespace {

double UpperTail(double x) { return 0.5 * std::erfc(x / std::sqrt(2.0)); }

// x with P(Z > x) = p, by bisection (p in (0, 0.5)).
double UpperQuantile(double p) {
  double lo = 0.0, hi = 40.0;
  for (int i = 0; i < 100; ++i) {
    const double mid = 0.5 * (lo + hi);
    if (UpperTail(mid) > p)
      lo = mid;
    else
      hi = mid;
  }
  return hi;
}

// Number of alternating (zig-zag) permutations of n, both directions: 2·Eₙ, from the
// Seidel–Entringer boustrophedon (E₀…: 1, 1, 1, 2, 5, 16, 61, ...).
double Alternating(int n) {
  std::vector<double> row{1.0};
  for (int k = 1; k <= n; ++k) {
    std::vector<double> next(static_cast<std::size_t>(k) + 1, 0.0);
    for (int j = 1; j <= k; ++j) next[j] = next[j - 1] + row[static_cast<std::size_t>(k - j)];
    row.swap(next);
  }
  return n < 2 ? 1.0 : 2.0 * row.back();
}

}  // namespace

std::string_view RunRuleName(RunRuleId rule) {
  switch (rule) {
    case RunRuleId::kBeyondLimits:
      return "beyond_limits";
    case RunRuleId::kTwoOfThreeFar:
      return "two_of_three_far";
    case RunRuleId::kFourOfFiveOut:
      return "four_of_five_out";
    case RunRuleId::kLongRunOneSide:
      return "long_run_one_side";
    case RunRuleId::kSteadyTrend:
      return "steady_trend";
    case RunRuleId::kSawtooth:
      return "sawtooth";
    case RunRuleId::kHuggingCentre:
      return "hugging_centre";
    case RunRuleId::kAvoidingCentre:
      return "avoiding_centre";
  }
  return "unknown";
}

FindingKind RunRuleKind(RunRuleId rule) {
  switch (rule) {
    case RunRuleId::kSteadyTrend:
      return FindingKind::kDrift;
    case RunRuleId::kSawtooth:
    case RunRuleId::kAvoidingCentre:
      return FindingKind::kOscillation;
    case RunRuleId::kHuggingCentre:
      return FindingKind::kSpread;
    default:
      return FindingKind::kShift;
  }
}

RunRuleSettings RunRuleSettings::ForInControlArl(double arl_points) {
  RunRuleSettings s;
  const double share = std::max(10.0, arl_points * kRunRuleCount);
  // N1: ARL = 1 / (2·Q(L)) (exact for independent normal points).
  s.beyond_sigma = UpperQuantile(1.0 / (2.0 * share));
  // N5 (2 of 3): a new signal needs this point and one of the two before beyond a,
  // same side: p ≈ 2 sides · q · 2q → ARL ≈ 1 / (4q²) (our approximation).
  s.far_sigma = UpperQuantile(std::sqrt(1.0 / (4.0 * share)));
  // N6 (4 of 5): this point and 3 of the 4 before: p ≈ 2 · 4q⁴ → ARL ≈ 1 / (8q⁴).
  s.out_sigma = UpperQuantile(std::pow(1.0 / (8.0 * share), 0.25));
  // N2: a run of n on either side of a fair coin: ARL ≈ 2ⁿ.
  s.one_side_run = std::max(9, static_cast<int>(std::ceil(std::log2(share))));
  // N3: n points monotone either way: probability 2/n! per window → ARL ≈ n!/2.
  int n = 6;
  double fact = 720.0;
  while (fact / 2.0 < share && n < 40) fact *= ++n;
  s.trend_run = n;
  // N4: a window of n alternating points: probability 2Eₙ/n! → ARL ≈ n!/(2Eₙ).
  n = 14;
  while (n < 60) {
    double ratio = 1.0;  // n! / (2Eₙ), built in a ratio to stay finite
    const double alt = Alternating(n);
    double f = 1.0;
    for (int k = 2; k <= n; ++k) f *= k;
    ratio = f / alt;
    if (ratio >= share) break;
    ++n;
  }
  s.sawtooth_run = n;
  // N7: n in a row inside ±1σ: p = 0.6827ⁿ → ARL ≈ p⁻ⁿ.
  const double inside = 1.0 - 2.0 * UpperTail(s.hugging_sigma);
  s.hugging_run = std::max(15, static_cast<int>(std::ceil(std::log(share) / -std::log(inside))));
  // N8: n in a row outside ±1σ: p = 0.3173ⁿ.
  const double outside = 2.0 * UpperTail(s.avoiding_sigma);
  s.avoiding_run = std::max(8, static_cast<int>(std::ceil(std::log(share) / -std::log(outside))));
  return s;
}

void RunRules::Reset() {
  far_up_ = far_down_ = out_up_ = out_down_ = 0;
  seen_ = side_run_ = trend_run_ = saw_run_ = last_move_ = hug_run_ = avoid_run_ = 0;
  avoid_up_ = avoid_down_ = false;
  last_ = 0.0;
}

std::optional<RunRuleId> RunRules::Update(double z, double slack) {
  slack = std::max(0.0, slack);
  std::optional<RunRuleId> fired;
  auto fire = [&](RunRuleId id) {
    if (!fired && s_.enabled[static_cast<int>(id)]) fired = id;
  };
  const std::uint32_t far_mask = (1u << std::clamp(s_.far_window, 1, 31)) - 1u;
  const std::uint32_t out_mask = (1u << std::clamp(s_.out_window, 1, 31)) - 1u;

  // N1
  if (std::fabs(z) > s_.beyond_sigma + slack) fire(RunRuleId::kBeyondLimits);
  // N5 / N6: sliding windows as bit masks.
  far_up_ = ((far_up_ << 1) | (z > s_.far_sigma + slack ? 1u : 0u)) & far_mask;
  far_down_ = ((far_down_ << 1) | (z < -s_.far_sigma - slack ? 1u : 0u)) & far_mask;
  if (std::popcount(far_up_) >= s_.far_count || std::popcount(far_down_) >= s_.far_count) {
    fire(RunRuleId::kTwoOfThreeFar);
  }
  out_up_ = ((out_up_ << 1) | (z > s_.out_sigma + slack ? 1u : 0u)) & out_mask;
  out_down_ = ((out_down_ << 1) | (z < -s_.out_sigma - slack ? 1u : 0u)) & out_mask;
  if (std::popcount(out_up_) >= s_.out_count || std::popcount(out_down_) >= s_.out_count) {
    fire(RunRuleId::kFourOfFiveOut);
  }
  // N2: points inside the dead band (and exact zeros) belong to neither side.
  const int side = z > slack ? 1 : (z < -slack ? -1 : 0);
  if (side == 0) {
    side_run_ = 0;
  } else if ((side > 0) == (side_run_ > 0) && side_run_ != 0) {
    side_run_ += side;
  } else {
    side_run_ = side;
  }
  if (std::abs(side_run_) >= s_.one_side_run) fire(RunRuleId::kLongRunOneSide);
  // N3 / N4: moves between successive points; a tie breaks both.
  if (seen_ > 0) {
    const int move = z > last_ ? 1 : (z < last_ ? -1 : 0);
    if (move == 0) {
      trend_run_ = 0;
      saw_run_ = 0;
    } else {
      trend_run_ = (move > 0) == (trend_run_ > 0) && trend_run_ != 0 ? trend_run_ + move : move;
      saw_run_ = (last_move_ != 0 && move == -last_move_) ? saw_run_ + 1 : 1;
    }
    last_move_ = move;
    if (std::abs(trend_run_) + 1 >= s_.trend_run) fire(RunRuleId::kSteadyTrend);
    if (saw_run_ + 1 >= s_.sawtooth_run) fire(RunRuleId::kSawtooth);
  }
  // N7: within ±hugging_sigma (narrowed by the slack).
  if (std::fabs(z) < std::max(0.0, s_.hugging_sigma - slack)) {
    ++hug_run_;
  } else {
    hug_run_ = 0;
  }
  if (hug_run_ >= s_.hugging_run) fire(RunRuleId::kHuggingCentre);
  // N8: outside ±avoiding_sigma, both sides present in the run.
  if (std::fabs(z) > s_.avoiding_sigma + slack) {
    ++avoid_run_;
    if (z > 0)
      avoid_up_ = true;
    else
      avoid_down_ = true;
  } else {
    avoid_run_ = 0;
    avoid_up_ = avoid_down_ = false;
  }
  if (avoid_run_ >= s_.avoiding_run && avoid_up_ && avoid_down_) fire(RunRuleId::kAvoidingCentre);

  last_ = z;
  ++seen_;
  if (fired) Reset();
  return fired;
}

}  // namespace heft
