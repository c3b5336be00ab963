// sim_test.cpp — the feed simulator: PRNG, normal generator, AR(1) noise,
// injected conditions, truth labels, demo catalogue and line interleaving.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <numbers>
#include <string>
#include <utility>
#include <vector>

#include "core/sim/demo_scenarios.h"
#include "core/sim/feed_generator.h"
#include "core/sim/feed_interleaver.h"
#include "core/sim/random_source.h"
#include "core/sim/scenario.h"

namespace heft {
namespace {

// A plain single-head line with no head offsets, no gross errors.
ScenarioSpec PlainSpec(std::uint64_t seed = 7) {
  ScenarioSpec spec;
  spec.name = "test";
  spec.line_id = "test-1";
  spec.level_grams = 503.0;
  spec.sigma_grams = 1.6;
  spec.heads = 1;
  spec.phi = 0.3;
  spec.packs_per_minute = 60.0;
  spec.start_time_ms = kDemoStartTimeMs;
  spec.seed = seed;
  return spec;
}

std::vector<GeneratedPack> Generate(const ScenarioSpec& spec, std::int64_t n) {
  FeedGenerator generator(spec);
  std::vector<GeneratedPack> packs;
  packs.reserve(static_cast<std::size_t>(n));
  for (std::int64_t i = 0; i < n; ++i) packs.push_back(generator.Next());
  return packs;
}

double NormalCdf(double x) { return 0.5 * std::erfc(-x / std::numbers::sqrt2); }

}  // namespace

// Reference values in the next two tests were computed by an independent Python
// implementation written for this purpose and run with /usr/bin/python3 (Debian 3.11):
//
//   M = (1 << 64) - 1
//   def splitmix(st):
//       st = (st + 0x9e3779b97f4a7c15) & M; z = st
//       z = ((z ^ (z >> 30)) * 0xbf58476d1ce4e5b9) & M
//       z = ((z ^ (z >> 27)) * 0x94d049bb133111eb) & M
//       return st, z ^ (z >> 31)
//   def rotl(x, k): return ((x << k) | (x >> (64 - k))) & M
//   class X:
//       def __init__(self, seed):
//           st = seed; self.s = []; self.spare = None
//           for _ in range(4): st, z = splitmix(st); self.s.append(z)
//       def next(self):
//           s = self.s; r = (rotl((s[1] * 5) & M, 7) * 9) & M; t = (s[1] << 17) & M
//           s[2] ^= s[0]; s[3] ^= s[1]; s[1] ^= s[2]; s[0] ^= s[3]; s[2] ^= t
//           s[3] = rotl(s[3], 45); return r
//       def uniform(self): return (self.next() >> 11) * 2.0**-53
//       def normal(self):   # Marsaglia polar; returns u*f, keeps v*f for the next call
//           if self.spare is not None: v = self.spare; self.spare = None; return v
//           while True:
//               u = 2*self.uniform()-1; v = 2*self.uniform()-1; s = u*u+v*v
//               if 0 < s < 1: break
//           f = math.sqrt(-2*math.log(s)/s); self.spare = v*f; return u*f
//
// Printed: X(42).s and five X(42).next(); three X(12345).uniform(); four X(2024).normal().

TEST_CASE("splitmix64 and xoshiro256** known answers", "[sim]") {
  // First splitmix64 output from state 0 (Python above; matches the value we remember).
  std::uint64_t state = 0;
  CHECK(SplitMix64(&state) == 0xe220a8397b1dcdafULL);
  CHECK(state == 0x9e3779b97f4a7c15ULL);

  RandomSource rng(42);
  CHECK(rng.state()[0] == 0xbdd732262feb6e95ULL);
  CHECK(rng.state()[1] == 0x28efe333b266f103ULL);
  CHECK(rng.state()[2] == 0x47526757130f9f52ULL);
  CHECK(rng.state()[3] == 0x581ce1ff0e4ae394ULL);
  const std::uint64_t expected[] = {0x15780b2e0c2ec716ULL, 0x6104d9866d113a7eULL,
                                    0xae17533239e499a1ULL, 0xecb8ad4703b360a1ULL,
                                    0xfde6dc7fe2ec5e64ULL};
  for (std::uint64_t want : expected) CHECK(rng.Next() == want);
}

TEST_CASE("uniform and normal known answers", "[sim]") {
  RandomSource uniform(12345);
  CHECK(uniform.Uniform() == Approx(0.7438081631565894).epsilon(1e-15));
  CHECK(uniform.Uniform() == Approx(0.13004553462783452).epsilon(1e-15));
  CHECK(uniform.Uniform() == Approx(0.9633344930128545).epsilon(1e-15));

  RandomSource normal(2024);
  CHECK(normal.Normal() == Approx(0.7877704987458325).epsilon(1e-13));
  CHECK(normal.Normal() == Approx(-0.7344488490158809).epsilon(1e-13));
  CHECK(normal.Normal() == Approx(-0.6355328318708062).epsilon(1e-13));
  CHECK(normal.Normal() == Approx(-1.4615153259586555).epsilon(1e-13));
}

TEST_CASE("uniform stays in the half-open unit interval with mean 1/2", "[sim]") {
  RandomSource rng(99);
  const int n = 1000000;
  double sum = 0;
  double lo = 1;
  double hi = 0;
  for (int i = 0; i < n; ++i) {
    const double u = rng.Uniform();
    REQUIRE(u >= 0.0);
    REQUIRE(u < 1.0);
    sum += u;
    lo = std::min(lo, u);
    hi = std::max(hi, u);
  }
  // SE of the mean = sqrt(1/12 / n) = 2.9e-4; allow 5 SE.
  CHECK(std::fabs(sum / n - 0.5) < 5 * std::sqrt(1.0 / 12.0 / n));
  CHECK(lo < 1e-5);
  CHECK(hi > 1 - 1e-5);
}

TEST_CASE("normal generator: moments and Kolmogorov-Smirnov check over 10^6 draws", "[sim]") {
  RandomSource rng(20260302);
  const int n = 1000000;
  std::vector<double> x(n);
  double sum = 0;
  for (auto& v : x) {
    v = rng.Normal();
    sum += v;
  }
  const double mean = sum / n;
  double m2 = 0;
  double m3 = 0;
  for (double v : x) {
    const double d = v - mean;
    m2 += d * d;
    m3 += d * d * d;
  }
  m2 /= n;
  m3 /= n;
  const double skew = m3 / std::pow(m2, 1.5);
  // Standard errors for N(0,1) samples: mean 1/sqrt(n) = 0.001, variance sqrt(2/n) = 0.0014,
  // skewness sqrt(6/n) = 0.0024 (textbook large-sample results). Tolerance: 5 SE.
  CHECK(std::fabs(mean) < 5 * std::sqrt(1.0 / n));
  CHECK(std::fabs(m2 - 1.0) < 5 * std::sqrt(2.0 / n));
  CHECK(std::fabs(skew) < 5 * std::sqrt(6.0 / n));

  // Two-sided KS: D = sup |F_n - Phi| over the sorted sample, Phi from std::erfc.
  // Asymptotic critical value at alpha = 0.001 is 1.9495 / sqrt(n) (scipy
  // kstwobign.isf(0.001), computed for this test); a generator with the wrong
  // shape (e.g. uniform or a mis-scaled normal) gives D in the 0.01..0.1 range.
  std::sort(x.begin(), x.end());
  double d = 0;
  for (int i = 0; i < n; ++i) {
    const double cdf = NormalCdf(x[i]);
    d = std::max(d,
                 std::max(static_cast<double>(i + 1) / n - cdf, cdf - static_cast<double>(i) / n));
  }
  CHECK(d < 1.9495 / std::sqrt(static_cast<double>(n)));

  // And at a few fixed points: empirical CDF vs Phi; SE sqrt(p(1-p)/n) <= 5e-4, allow 5 SE.
  for (double z : {-2.5, -1.0, 0.0, 0.5, 1.96}) {
    const double below = static_cast<double>(std::lower_bound(x.begin(), x.end(), z) - x.begin());
    const double p = NormalCdf(z);
    INFO("z = " << z);
    CHECK(std::fabs(below / n - p) < 5 * std::sqrt(p * (1 - p) / n));
  }
}

TEST_CASE("generator is deterministic per seed", "[sim]") {
  ScenarioSpec spec;
  REQUIRE(MakeDemoScenario("hunting", "", 5, &spec).ok());
  const auto a = Generate(spec, 5000);
  const auto b = Generate(spec, 5000);
  for (std::size_t i = 0; i < a.size(); ++i) {
    REQUIRE(a[i].pack.index == b[i].pack.index);
    REQUIRE(a[i].pack.time_ms == b[i].pack.time_ms);
    REQUIRE(a[i].pack.grams == b[i].pack.grams);
    REQUIRE(a[i].pack.head == b[i].pack.head);
    REQUIRE(a[i].active == b[i].active);
  }
  ScenarioSpec other;
  REQUIRE(MakeDemoScenario("hunting", "", 6, &other).ok());
  const auto c = Generate(other, 5000);
  int same_weight = 0;
  int same_time = 0;
  for (std::size_t i = 0; i < a.size(); ++i) {
    same_weight += a[i].pack.grams == c[i].pack.grams;
    same_time += a[i].pack.time_ms == c[i].pack.time_ms;
  }
  // Weights at 0.1 g resolution with sigma 1.2 g coincide now and then (about 1 in 30), not often.
  CHECK(same_weight < 500);
  CHECK(same_time < 500);
}

TEST_CASE("AR(1) noise: lag-1 autocorrelation phi, marginal sd sigma", "[sim]") {
  for (double phi : {0.0, 0.6, -0.4}) {
    ScenarioSpec spec = PlainSpec(11);
    spec.phi = phi;
    spec.sigma_grams = 2.0;
    const int n = 200000;
    FeedGenerator generator(spec);
    std::vector<double> r(n);
    double sum = 0;
    for (auto& v : r) {
      const GeneratedPack p = generator.Next();
      v = p.pack.grams - p.true_mean_grams;
      sum += v;
    }
    const double mean = sum / n;
    double c0 = 0;
    double c1 = 0;
    for (int i = 0; i < n; ++i) {
      c0 += (r[i] - mean) * (r[i] - mean);
      if (i > 0) c1 += (r[i] - mean) * (r[i - 1] - mean);
    }
    const double rho1 = c1 / c0;
    const double sd = std::sqrt(c0 / (n - 1));
    INFO("phi = " << phi << " rho1 = " << rho1 << " sd = " << sd);
    // SE(rho1) ~ sqrt((1 - phi^2) / n) <= 0.0023 (Bartlett); allow ~5 SE. The 0.1 g rounding
    // adds variance 0.01/12 = 0.0008 g^2 to sigma^2 = 4: negligible here.
    CHECK(std::fabs(rho1 - phi) < 0.012);
    // SE of sd for AR(1): sigma * sqrt((1 + phi^2) / (2 n (1 - phi^2))) <= 0.005 g; allow 2 %.
    CHECK(std::fabs(sd - 2.0) < 0.04);
  }
}

TEST_CASE("head offsets show in the per-head means, heads cycle in order", "[sim]") {
  ScenarioSpec spec;
  REQUIRE(MakeDemoScenario("in-control", "oats-1", 3, &spec).ok());
  spec.gross_probability = 0;
  REQUIRE(spec.heads == 12);
  const int n = 120000;
  FeedGenerator generator(spec);
  std::vector<double> sum(12, 0.0);
  std::vector<int> count(12, 0);
  for (int i = 0; i < n; ++i) {
    const GeneratedPack p = generator.Next();
    REQUIRE(p.pack.head == i % 12);
    sum[p.pack.head] += p.pack.grams;
    ++count[p.pack.head];
  }
  for (int h = 0; h < 12; ++h) {
    const double mean = sum[h] / count[h];
    const double want = spec.level_grams + spec.head_offsets_grams[h];
    INFO("head " << h << " mean " << mean << " want " << want);
    // SE = 1.6 / sqrt(10000) = 0.016 g; allow 5 SE.
    CHECK(std::fabs(mean - want) < 0.08);
  }
}

TEST_CASE("step: truth label and size at the right packs", "[sim]") {
  ScenarioSpec base = PlainSpec();
  ScenarioSpec spec = base;
  spec.conditions.push_back(Condition::Step(500, 3.0, 800));
  const auto a = Generate(base, 1000);
  const auto b = Generate(spec, 1000);
  for (int i = 0; i < 1000; ++i) {
    const bool in = i >= 500 && i < 800;
    INFO("pack " << i);
    REQUIRE(b[i].Active(0) == in);
    REQUIRE(b[i].true_mean_grams - a[i].true_mean_grams == Approx(in ? 3.0 : 0.0).margin(1e-9));
    // Same noise streams: the reported weights differ by the step (within the 0.1 g rounding).
    REQUIRE(std::fabs(b[i].pack.grams - a[i].pack.grams - (in ? 3.0 : 0.0)) < 0.1 + 1e-9);
  }
}

TEST_CASE("ramp: grows by slope per pack, holds after its end", "[sim]") {
  ScenarioSpec base = PlainSpec();
  ScenarioSpec spec = base;
  spec.conditions.push_back(Condition::Ramp(300, -0.01, 600));
  const auto a = Generate(base, 900);
  const auto b = Generate(spec, 900);
  auto effect = [&](int i) { return b[i].true_mean_grams - a[i].true_mean_grams; };
  CHECK(effect(299) == Approx(0.0).margin(1e-9));
  CHECK(effect(300) == Approx(-0.01));
  CHECK(effect(449) == Approx(-1.5));
  CHECK(effect(599) == Approx(-3.0));
  CHECK(effect(600) == Approx(-3.0));
  CHECK(effect(899) == Approx(-3.0));
  CHECK_FALSE(b[299].Active(0));
  CHECK(b[300].Active(0));
  CHECK(b[599].Active(0));
  CHECK_FALSE(b[600].Active(0));
}

TEST_CASE("hunting swing and alternation follow their shapes", "[sim]") {
  ScenarioSpec base = PlainSpec();
  base.heads = 4;
  base.head_offsets_grams = {0.3, -0.4, 0.2, -0.1};
  ScenarioSpec spec = base;
  spec.conditions.push_back(Condition::Hunting(200, 2.0, 40.0, 1000));
  spec.conditions.push_back(Condition::Alternation(1200, 0.5));
  const auto a = Generate(base, 1400);
  const auto b = Generate(spec, 1400);
  for (int i = 0; i < 1400; ++i) {
    double want = 0;
    if (i >= 200 && i < 1000) want = 2.0 * std::sin(2 * std::numbers::pi * (i - 200) / 40.0);
    if (i >= 1200) want = (i - 1200) % 2 == 0 ? 0.5 : -0.5;
    INFO("pack " << i);
    REQUIRE(b[i].true_mean_grams - a[i].true_mean_grams == Approx(want).margin(1e-9));
    REQUIRE(b[i].Active(0) == (i >= 200 && i < 1000));
    REQUIRE(b[i].Active(1) == (i >= 1200));
  }
  // A quarter period in, the swing is at its crest.
  CHECK(b[210].true_mean_grams - a[210].true_mean_grams == Approx(2.0));
}

TEST_CASE("start-up transients: shape and settling label", "[sim]") {
  ScenarioSpec base = PlainSpec();
  ScenarioSpec first = base;
  first.conditions.push_back(Condition::StartupFirstOrder(0, -8.0, 60.0));
  const auto a = Generate(base, 400);
  const auto b = Generate(first, 400);
  CHECK(b[0].true_mean_grams - a[0].true_mean_grams == Approx(-8.0));
  CHECK(b[60].true_mean_grams - a[60].true_mean_grams == Approx(-8.0 / std::numbers::e));
  // 2 % settling at 4 tau = 240 packs (check-values.md §5.2, common practice).
  CHECK(first.conditions[0].LabelEnd() == 240);
  CHECK(b[239].Active(0));
  CHECK_FALSE(b[240].Active(0));

  ScenarioSpec ringing = base;
  ringing.conditions.push_back(Condition::StartupUnderdamped(100, 10.0, 0.35, 30.0));
  const auto c = Generate(ringing, 400);
  auto effect = [&](int i) { return c[i].true_mean_grams - a[i].true_mean_grams; };
  CHECK(effect(99) == Approx(0.0).margin(1e-12));
  CHECK(effect(100) == Approx(10.0));
  // Under-damped: the deviation crosses zero and overshoots (negative) within the first
  // damped period wd = wn sqrt(1 - zeta^2); the peak overshoot of a second-order step
  // response is exp(-zeta pi / sqrt(1 - zeta^2)) = 0.309 of the step (standard result).
  const double zeta = 0.35;
  const double wd = 2 * std::numbers::pi / 30.0 * std::sqrt(1 - zeta * zeta);
  const int peak = 100 + static_cast<int>(std::lround(std::numbers::pi / wd));
  CHECK(effect(peak) < 0);
  CHECK(effect(peak) ==
        Approx(-10.0 * std::exp(-zeta * std::numbers::pi / std::sqrt(1 - zeta * zeta)))
            .epsilon(0.02));
  // Label: 4 / (zeta wn) = 4 * 30 / (0.35 * 2 pi) = 54.57 -> 55 packs.
  CHECK(ringing.conditions[0].LabelEnd() == 155);
}

TEST_CASE("spread increase scales the noise sd", "[sim]") {
  ScenarioSpec spec = PlainSpec(21);
  spec.phi = 0;
  spec.conditions.push_back(Condition::Spread(50000, 1.6));
  FeedGenerator generator(spec);
  double s_before = 0;
  double s_after = 0;
  for (int i = 0; i < 100000; ++i) {
    const GeneratedPack p = generator.Next();
    const double r = p.pack.grams - p.true_mean_grams;
    (i < 50000 ? s_before : s_after) += r * r;
    REQUIRE(p.true_sigma_grams == Approx(i < 50000 ? 1.6 : 2.56));
    REQUIRE(p.Active(0) == (i >= 50000));
  }
  // SE of sd with n = 50000: sigma / sqrt(2n) = 0.5 %; allow 3 %.
  CHECK(std::sqrt(s_before / 50000) == Approx(1.6).epsilon(0.03));
  CHECK(std::sqrt(s_after / 50000) == Approx(2.56).epsilon(0.03));
}

TEST_CASE("stuck sensor repeats the last value for N packs", "[sim]") {
  ScenarioSpec spec = PlainSpec();
  spec.conditions.push_back(Condition::Stuck(300, 40));
  const auto b = Generate(spec, 400);
  for (int i = 300; i < 340; ++i) {
    REQUIRE(b[i].pack.grams == b[299].pack.grams);
    REQUIRE(b[i].Active(0));
  }
  CHECK_FALSE(b[299].Active(0));
  CHECK_FALSE(b[340].Active(0));
  // Afterwards the real readings come back (with sigma 1.6 g, ten equal values in a row
  // after the stuck stretch would be astronomically unlikely).
  int equal = 0;
  for (int i = 340; i < 350; ++i) equal += b[i].pack.grams == b[299].pack.grams;
  CHECK(equal < 10);
}

TEST_CASE("stop produces a time gap of the stated length, times advance at the rate", "[sim]") {
  ScenarioSpec spec = PlainSpec();
  spec.packs_per_minute = 45.0;  // 1333.3 ms per pack
  spec.conditions.push_back(Condition::Stop(1500, 90.0));
  const auto b = Generate(spec, 3000);
  const double interval = 60000.0 / 45.0;
  // Pack 0 is stamped at the start time plus 0..10 % of an interval of jitter.
  CHECK(b[0].pack.time_ms >= kDemoStartTimeMs);
  CHECK(b[0].pack.time_ms <= kDemoStartTimeMs + std::llround(0.1 * interval) + 1);
  for (int i = 1; i < 3000; ++i) {
    const double gap = static_cast<double>(b[i].pack.time_ms - b[i - 1].pack.time_ms);
    INFO("pack " << i << " gap " << gap);
    const double expected = interval + (i == 1500 ? 90000.0 : 0.0);
    // 0..10 % jitter on each of the two times, plus 1 ms of rounding.
    REQUIRE(std::fabs(gap - expected) <= 0.1 * interval + 1.0);
    REQUIRE(b[i].Active(0) == (i == 1500));
  }
  // Over the whole run: 2999 intervals plus the stop.
  const double span = static_cast<double>(b[2999].pack.time_ms - b[0].pack.time_ms);
  CHECK(std::fabs(span - (2999 * interval + 90000.0)) <= 0.1 * interval + 1.0);
}

TEST_CASE("gross errors: rate and size", "[sim]") {
  ScenarioSpec spec = PlainSpec(31);
  spec.gross_probability = 0.01;
  FeedGenerator generator(spec);
  int gross = 0;
  const int n = 100000;
  for (int i = 0; i < n; ++i) {
    const GeneratedPack p = generator.Next();
    if (!p.gross) continue;
    ++gross;
    const double z = std::fabs(p.pack.grams - p.true_mean_grams) / spec.sigma_grams;
    // 6..12 sigma plus ordinary noise (rarely beyond +-4.5 sigma).
    REQUIRE(z > 1.5);
    REQUIRE(z < 16.5);
  }
  // Binomial(100000, 0.01): mean 1000, sd 31.5; allow 5 sd.
  CHECK(std::abs(gross - 1000) < 158);
}

TEST_CASE("scenario validation names the problem", "[sim]") {
  ScenarioSpec spec = PlainSpec();
  CHECK(ValidateScenario(spec).ok());
  auto error_of = [](ScenarioSpec s) { return ValidateScenario(s).message(); };
  ScenarioSpec bad = spec;
  bad.phi = 1.0;
  CHECK_THAT(error_of(bad), Catch::Contains("phi"));
  bad = spec;
  bad.line_id = "oats 1";
  CHECK_THAT(error_of(bad), Catch::Contains("line id"));
  bad = spec;
  bad.heads = 4;
  bad.head_offsets_grams = {0.1, 0.2};
  CHECK_THAT(error_of(bad), Catch::Contains("2 given for 4 heads"));
  bad = spec;
  bad.conditions.push_back(Condition::HeadOff(10, 3, 1.0));
  CHECK_THAT(error_of(bad), Catch::Contains("head 3 is not in 0..0"));
  bad = spec;
  bad.conditions.push_back(Condition::StartupUnderdamped(0, 1.0, 1.2, 30));
  CHECK_THAT(error_of(bad), Catch::Contains("zeta"));
  bad = spec;
  bad.conditions.push_back(Condition::Stop(5, 0.0));
  CHECK_THAT(error_of(bad), Catch::Contains("stop length"));
  bad = spec;
  bad.packs_per_minute = 0;
  CHECK_THAT(error_of(bad), Catch::Contains("pack rate"));
  // A bad spec still generates without undefined behaviour.
  bad = spec;
  bad.heads = 0;
  bad.phi = 3;
  FeedGenerator generator(bad);
  for (int i = 0; i < 10; ++i) CHECK(std::isfinite(generator.Next().pack.grams));
}

TEST_CASE("demo catalogue: every scenario builds on every plant line", "[sim]") {
  for (const auto& info : DemoScenarios()) {
    for (std::string_view line : DemoLines()) {
      ScenarioSpec spec;
      INFO(info.name << " on " << line);
      REQUIRE(MakeDemoScenario(info.name, line, 1, &spec).ok());
      CHECK(spec.line_id == line);
      FeedGenerator generator(spec);
      for (int i = 0; i < 100; ++i) REQUIRE(generator.Next().pack.grams > 0);
    }
    ScenarioSpec spec;
    REQUIRE(MakeDemoScenario(info.name, "", 1, &spec).ok());
    CHECK(spec.line_id == info.default_line);
  }
  ScenarioSpec spec;
  CHECK_THAT(MakeDemoScenario("no-such", "", 1, &spec).message(),
             Catch::Contains("unknown scenario 'no-such'"));
  CHECK_THAT(MakeDemoScenario("drift", "bad line!", 1, &spec).message(),
             Catch::Contains("line id"));

  // The plant as described: oats-1 500 g, 12 heads, sigma 1.6 g; honey-2 340 g jars, 4 heads.
  REQUIRE(MakeDemoScenario("head-off", "oats-1", 1, &spec).ok());
  CHECK(spec.nominal_grams == 500.0);
  CHECK(spec.heads == 12);
  CHECK(spec.sigma_grams == 1.6);
  REQUIRE(spec.conditions.size() == 1);
  CHECK(spec.conditions[0].size_grams == Approx(-3.0 * 1.6));
  CHECK(spec.conditions[0].head == 7);
  REQUIRE(MakeDemoScenario("head-off", "honey-2", 1, &spec).ok());
  CHECK(spec.nominal_grams == 340.0);
  CHECK(spec.heads == 4);
  CHECK(spec.conditions[0].head == 3);

  // The seed mixes in the line: same line same seed, another line another seed.
  ScenarioSpec a;
  ScenarioSpec b;
  ScenarioSpec c;
  REQUIRE(MakeDemoScenario("step", "oats-2", 9, &a).ok());
  REQUIRE(MakeDemoScenario("in-control", "oats-2", 9, &b).ok());
  REQUIRE(MakeDemoScenario("step", "oats-1", 9, &c).ok());
  CHECK(a.seed == b.seed);
  CHECK(a.seed != c.seed);
}

TEST_CASE("interleaver merges lines in time order", "[sim]") {
  FeedInterleaver feed;
  for (auto [name, line] : {std::pair{"drift", "oats-1"}, std::pair{"step", "oats-2"},
                            std::pair{"hunting", "honey-2"}}) {
    ScenarioSpec spec;
    REQUIRE(MakeDemoScenario(name, line, 1, &spec).ok());
    feed.Add(spec, 500);
  }
  std::vector<std::int64_t> next_index(3, 0);
  std::int64_t last_time = 0;
  InterleavedPack p;
  int total = 0;
  while (feed.Next(&p)) {
    REQUIRE(p.generated.pack.time_ms >= last_time);
    last_time = p.generated.pack.time_ms;
    REQUIRE(p.generated.pack.index == next_index[p.source]++);
    ++total;
  }
  CHECK(total == 1500);
  CHECK(next_index == std::vector<std::int64_t>{500, 500, 500});
  CHECK(feed.spec(2).line_id == "honey-2");
  CHECK_FALSE(feed.Next(&p));
}
}  // namespace heft
