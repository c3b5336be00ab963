// Tests of the moment engines: MomentAccumulator, ShiftedSums via RollingMoments,
// CumulativeStats and the count/time windows. Tag [stats].
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <random>
#include <vector>

#include "core/stats/count_window_stats.h"
#include "core/stats/cumulative_stats.h"
#include "core/stats/moments.h"
#include "core/stats/quantile.h"
#include "core/stats/rolling_moments.h"
#include "core/stats/time_window_stats.h"
#include "core/stats/window_summary.h"

namespace heft {
namespace {

// Two-pass float64 reference: mean, then Σ(x − mean)² (the textbook stable method).
struct TwoPass {
  double mean = 0.0, sd = 0.0;
};
TwoPass Reference(const std::vector<double>& v) {
  TwoPass r;
  double sum = 0.0;
  for (double x : v) sum += x;
  r.mean = sum / static_cast<double>(v.size());
  double ss = 0.0;
  for (double x : v) ss += (x - r.mean) * (x - r.mean);
  r.sd = std::sqrt(ss / static_cast<double>(v.size() - 1));
  return r;
}

double Rel(double a, double b) { return std::fabs(a - b) / std::max(std::fabs(b), 1e-300); }

TEST_CASE("MomentAccumulator: hand-checkable data set", "[stats]") {
  // 2,4,4,4,5,5,7,9: mean 5, Σ(x−5)² = 32, sd = √(32/7). Skewness and excess kurtosis with
  // bias=False from scipy 1.10.1 (computed when writing this test [X]): 0.8184875533567996,
  // 0.9406249999999998.
  MomentAccumulator acc;
  for (double x : {2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0}) acc.Add(x);
  CHECK(acc.count() == 8);
  CHECK(acc.Mean() == Approx(5.0).epsilon(1e-15));
  CHECK(acc.StdDev() == Approx(std::sqrt(32.0 / 7.0)).epsilon(1e-14));
  CHECK(acc.Min() == 2.0);
  CHECK(acc.Max() == 9.0);
  REQUIRE(acc.Skewness());
  CHECK(*acc.Skewness() == Approx(0.8184875533567996).epsilon(1e-12));
  REQUIRE(acc.ExcessKurtosis());
  CHECK(*acc.ExcessKurtosis() == Approx(0.9406249999999998).epsilon(1e-12));
}

TEST_CASE("MomentAccumulator: shape undefined for too few values or no spread", "[stats]") {
  MomentAccumulator acc;
  acc.Add(500.0);
  acc.Add(501.0);
  CHECK_FALSE(acc.Skewness());
  acc.Add(502.0);
  CHECK(acc.Skewness());
  CHECK_FALSE(acc.ExcessKurtosis());  // needs 4
  MomentAccumulator flat;
  for (int i = 0; i < 10; ++i) flat.Add(500.0);
  CHECK(flat.StdDev() == 0.0);
  CHECK_FALSE(flat.Skewness());
  CHECK_FALSE(flat.ExcessKurtosis());
}

TEST_CASE("MomentAccumulator: merge equals one pass, at 1e6 g", "[stats]") {
  std::mt19937_64 rng(11);
  std::normal_distribution<double> noise(0.0, 0.5);
  MomentAccumulator all, a, b, c;
  std::vector<double> values;
  for (int i = 0; i < 3000; ++i) {
    const double x = 1e6 + noise(rng) + (i > 2000 ? 0.7 : 0.0);
    values.push_back(x);
    all.Add(x);
    (i < 1000 ? a : (i < 1700 ? b : c)).Add(x);
  }
  a.Merge(b);
  a.Merge(c);
  const TwoPass ref = Reference(values);
  CHECK(Rel(a.Mean(), ref.mean) < 1e-15);
  CHECK(Rel(a.StdDev(), ref.sd) < 1e-9);
  CHECK(Rel(all.StdDev(), ref.sd) < 1e-9);
  CHECK(*a.Skewness() == Approx(*all.Skewness()).epsilon(1e-7));
  CHECK(*a.ExcessKurtosis() == Approx(*all.ExcessKurtosis()).epsilon(1e-7));
  CHECK(a.Min() == all.Min());
  CHECK(a.Max() == all.Max());
}

// 10^7 updates of a 500-pack count window of 1,000,000 g + noise (sd 0.5 g) with a slow
// wander and level steps, checked against a two-pass reference over the window every
// 10^6 updates. Tolerances: mean 1e-9 relative — double rounding of sums of ~1e6 values
// is ~1e-16 relative per operation and the sums are rebuilt every 500 removals, so even
// 500 accumulated roundings stay near 1e-13; 1e-9 is what the issue asks for. sd 1e-6
// relative — the spread is 2e6 times smaller than the level, so the reference itself
// only resolves x − mean to ~1e-10 g (2e-10 relative of 0.5 g); 1e-6 leaves room for
// that and is 400× tighter than the naive Σx² − (Σx)²/n formula achieves here (it loses
// ~(1e6/0.5)² × 1e-16 ≈ 4e-4 relative — checked below so the test can tell).
TEST_CASE("RollingMoments: 10^7 updates at 1e6 g stay exact", "[stats]") {
  constexpr std::size_t kWindow = 500;
  RollingMoments window(kWindow);
  std::mt19937_64 rng(20260302);
  std::normal_distribution<double> noise(0.0, 0.5);
  std::vector<double> ring(kWindow);
  double worst_mean = 0.0, worst_sd = 0.0, worst_naive = 0.0;
  for (std::size_t i = 1; i <= 10'000'000; ++i) {
    const double level = 1e6 + 3.0 * std::sin(static_cast<double>(i) * 1e-5) +
                         ((i / 1'700'000) % 2 == 1 ? 25.0 : 0.0);
    const double x = level + noise(rng);
    ring[i % kWindow] = x;
    window.Add(x);
    if (i % 1'000'000 == 0 || i == 1'700'000 + 250) {
      const TwoPass ref = Reference(ring);
      worst_mean = std::max(worst_mean, Rel(window.Mean(), ref.mean));
      worst_sd = std::max(worst_sd, Rel(window.StdDev(), ref.sd));
      double s = 0.0, s2 = 0.0;
      for (double v : ring) {
        s += v;
        s2 += v * v;
      }
      const double naive = std::sqrt(std::max(0.0, (s2 - s * s / kWindow) / (kWindow - 1)));
      worst_naive = std::max(worst_naive, Rel(naive, ref.sd));
    }
  }
  INFO("worst mean error " << worst_mean << ", sd " << worst_sd << ", naive sd " << worst_naive);
  CHECK(worst_mean <= 1e-9);
  CHECK(worst_sd <= 1e-6);
  CHECK(worst_naive > 1e-6);  // the check has teeth: the naive formula fails it
}

TEST_CASE("RollingMoments: shape and moving range match a batch summary", "[stats]") {
  std::mt19937_64 rng(3);
  std::lognormal_distribution<double> skewed(0.5, 0.6);
  RollingMoments window(200);
  std::vector<double> all;
  for (int i = 0; i < 1234; ++i) {
    const double x = 340.0 + skewed(rng);
    all.push_back(x);
    window.Add(x);
  }
  const std::vector<double> last(all.end() - 200, all.end());
  const WindowSummary batch = SummarizeSeries(last);
  CHECK(window.count() == 200);
  CHECK(window.Mean() == Approx(batch.mean).epsilon(1e-12));
  CHECK(window.StdDev() == Approx(batch.sd).epsilon(1e-10));
  CHECK(*window.Skewness() == Approx(*batch.skewness).epsilon(1e-8));
  CHECK(*window.ExcessKurtosis() == Approx(*batch.kurtosis).epsilon(1e-8));
  CHECK(window.MovingRangeSigma() == Approx(batch.mr_sigma).epsilon(1e-10));
  std::vector<double> copy;
  window.CopyInOrder(&copy);
  CHECK(copy == last);
  CHECK(window.Oldest() == last.front());
  CHECK(window.Newest() == last.back());
}

TEST_CASE("RollingMoments: a window of equal values has no spread", "[stats]") {
  RollingMoments window(50);
  for (int i = 0; i < 100; ++i) window.Add(500.0 + i * 0.37);
  for (int i = 0; i < 50; ++i) window.Add(503.3);
  CHECK(window.StdDev() == 0.0);
  CHECK(window.Mean() == Approx(503.3).epsilon(1e-14));
  CHECK_FALSE(window.Skewness());
  CHECK(window.MovingRangeSigma() == 0.0);
}

TEST_CASE("CumulativeStats: reset on lot, shift and start", "[stats]") {
  CumulativeStats cum;
  CHECK(cum.reset_reason() == ResetReason::kStart);
  for (double x : {500.0, 502.0, 501.0}) cum.Add(x);
  CHECK(cum.count() == 3);
  CHECK(cum.Mean() == Approx(501.0));
  CHECK(cum.MeanMovingRange() == Approx(1.5));  // |2| and |−1|
  CHECK_FALSE(cum.Add(std::nan("")));
  CHECK(cum.count() == 3);
  cum.Reset(ResetReason::kLot, 1772431200000);
  CHECK(cum.count() == 0);
  CHECK(cum.reset_reason() == ResetReason::kLot);
  CHECK(cum.since_ms() == 1772431200000);
  CHECK(ResetReasonName(ResetReason::kShift) == "shift");
  cum.Add(340.0);
  cum.Add(341.0);
  CHECK(cum.Mean() == Approx(340.5));
  CHECK(cum.MeanMovingRange() == Approx(1.0));  // no moving range across the reset
  CHECK(cum.MovingRangeSigma() == Approx(1.0 / 1.1283791670955126));
}

TEST_CASE("CountWindowStats: summary equals a batch summary of the last N", "[stats]") {
  std::mt19937_64 rng(5);
  std::normal_distribution<double> noise(0.0, 1.8);
  CountWindowStats window(97);
  std::vector<double> all;
  for (int i = 0; i < 5000; ++i) {
    const double x = std::round((503.0 + noise(rng)) * 10.0) / 10.0;  // 0.1 g: many ties
    all.push_back(x);
    REQUIRE(window.Add(x));
    if (i % 613 == 0 || i == 4999) {
      const std::size_t n = std::min<std::size_t>(all.size(), 97);
      const std::vector<double> last(all.end() - static_cast<std::ptrdiff_t>(n), all.end());
      for (QuantileType type : {QuantileType::kType6, QuantileType::kType7}) {
        const WindowSummary w = window.Summary(type);
        const WindowSummary b = SummarizeSeries(last, type);
        CHECK(w.count == b.count);
        CHECK(w.q1 == b.q1);  // same order statistics, same arithmetic: exactly equal
        CHECK(w.median == b.median);
        CHECK(w.q3 == b.q3);
        CHECK(w.min == b.min);
        CHECK(w.max == b.max);
        CHECK(w.mean == Approx(b.mean).epsilon(1e-12));
        CHECK(w.sd == Approx(b.sd).epsilon(1e-9));
      }
    }
  }
  CHECK_FALSE(window.Add(std::numeric_limits<double>::infinity()));
  CHECK(window.count() == 97);
}

TEST_CASE("TimeWindowStats: keeps the last T minutes (open start, closed end) and matches a batch summary", "[stats]") {
  TimeWindowStats window(60'000);  // last minute
  std::mt19937_64 rng(9);
  std::normal_distribution<double> noise(0.0, 1.2);
  std::uniform_int_distribution<int> gap(100, 900);
  std::vector<std::pair<std::int64_t, double>> all;
  std::int64_t t = 1772431200000;
  for (int i = 0; i < 20000; ++i) {
    t += gap(rng);
    const double x = 343.0 + noise(rng);
    all.emplace_back(t, x);
    window.Add(t, x);
  }
  std::vector<double> inside;
  for (const auto& [time, x] : all) {
    if (time > t - 60'000) inside.push_back(x);
  }
  const WindowSummary w = window.Summary();
  const WindowSummary b = SummarizeSeries(inside);
  CHECK(w.count == inside.size());
  CHECK(w.mean == Approx(b.mean).epsilon(1e-12));
  CHECK(w.sd == Approx(b.sd).epsilon(1e-9));
  CHECK(w.mr_sigma == Approx(b.mr_sigma).epsilon(1e-9));
  CHECK(*w.skewness == Approx(*b.skewness).epsilon(1e-6));
  CHECK(w.median == b.median);
  CHECK(w.q1 == b.q1);
  std::vector<double> values;
  window.Values(&values);
  CHECK(values == inside);
  // Silence: advancing time empties the window; a clock step back does not revive packs.
  window.AdvanceTo(t + 30'000);
  CHECK(window.count() < inside.size());
  window.AdvanceTo(t + 60'000);
  CHECK(window.count() == 0);
  window.Add(t, 340.0);  // earlier than now: treated as now
  CHECK(window.count() == 1);
  CHECK(window.now_ms() == t + 60'000);
  CHECK(window.Mean() == 340.0);
}

}  // namespace
}  // namespace heft
