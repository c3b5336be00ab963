// The detection engine's building blocks against published tables, numpy and known
// constructions: EWMA (Lucas & Saccucci ARLs), step-vs-ramp fit, periodogram,
// head CUSUMs, log-variance CUSUM, stuck readings, settle fit and the robust baseline.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <vector>

#include "core/detect/change_shape.h"
#include "core/detect/ewma_chart.h"
#include "core/detect/head_cusum.h"
#include "core/detect/head_pattern.h"
#include "core/detect/log_variance_cusum.h"
#include "core/detect/periodicity_test.h"
#include "core/detect/robust_baseline.h"
#include "core/detect/settle_fit.h"
#include "core/detect/stuck_reading.h"
#include "core/sim/random_source.h"

using namespace heft;

TEST_CASE("EWMA time-varying limit factors match check-values §4.4", "[detect][ewma]") {
  // check-values.md §4.4 [X]: L = 3, λ = 0.2 and L = 2.7, λ = 0.1, i = 1..6.
  const double a[] = {0.60000, 0.76837, 0.85899, 0.91227, 0.94479, 0.96503};
  const double b[] = {0.27000, 0.36325, 0.42400, 0.46746, 0.49990, 0.52471};
  for (int i = 1; i <= 6; ++i) {
    CHECK(EwmaChart::LimitFactor(0.2, 3.0, i) == Approx(a[i - 1]).margin(5e-6));
    CHECK(EwmaChart::LimitFactor(0.1, 2.7, i) == Approx(b[i - 1]).margin(5e-6));
  }
}

TEST_CASE("EWMA ARL (Brook-Evans chain) reproduces Lucas & Saccucci", "[detect][ewma]") {
  // Lucas & Saccucci, Technometrics 32(1), 1990, Table 3, as computed in
  // check-values.md §4.4 [X]; tolerance 1 % relative (§4.4).
  CHECK(EwmaChart::Arl(0.10, 2.814, 0.0, 201) == Approx(499.6).epsilon(0.01));
  CHECK(EwmaChart::Arl(0.10, 2.814, 1.0, 201) == Approx(10.3).epsilon(0.01));
  CHECK(EwmaChart::Arl(0.05, 2.615, 0.0, 201) == Approx(499.9).epsilon(0.01));
  CHECK(EwmaChart::Arl(0.05, 2.615, 0.5, 201) == Approx(28.8).epsilon(0.01));
  CHECK(EwmaChart::Arl(0.20, 2.962, 2.0, 201) == Approx(3.7).epsilon(0.02));  // printed to 0.1
  CHECK(EwmaChart::Arl(0.10, 2.7, 0.0, 201) == Approx(369.0).epsilon(0.01));
  // Solving back for L.
  CHECK(EwmaChart::LimitForArl(0.10, 499.6, 201) == Approx(2.814).margin(0.01));
  // The root is solved tightly: the chain at the L found gives the target back.
  for (const double arl0 : {370.0, 5000.0, 200000.0}) {
    const double l = EwmaChart::LimitForArl(0.05, arl0, 61);
    CHECK(EwmaChart::Arl(0.05, l, 0.0, 61) == Approx(arl0).epsilon(1e-8));
  }
  // Targets outside what L in [0.5, 8] can give stop at the ends.
  CHECK(EwmaChart::LimitForArl(0.05, 1.0, 61) == 0.5);
  CHECK(EwmaChart::LimitForArl(0.05, 1e300, 61) == 8.0);
}

TEST_CASE("EWMA chart reproduces the NIST e-Handbook §6.3.2.4 example", "[detect][ewma]") {
  // check-values.md §4.5: target 50, s = 2.0539, λ = 0.3, L = 3; data [M], EWMA [X].
  const double x[] = {52.0, 47.0, 53.0, 49.3, 50.1, 47.0, 51.0, 50.1, 51.2, 50.5,
                      49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1};
  const double ewma[] = {50.60, 49.52, 50.56, 50.18, 50.16, 49.21, 49.75, 49.85, 50.26, 50.33,
                         50.11, 49.36, 49.52, 50.05, 49.38, 49.92, 50.73, 51.23, 51.94, 51.99};
  const double s = 2.0539;
  EwmaChart chart(0.3, 3.0);
  CHECK(50.0 + s * chart.HalfWidth() == Approx(52.5884).margin(1e-4));
  for (int i = 0; i < 20; ++i) {
    CHECK(chart.Update((x[i] - 50.0) / s) == EwmaChart::Signal::kNone);
    CHECK(50.0 + s * chart.value() == Approx(ewma[i]).margin(0.006));
  }
}

TEST_CASE("step-vs-ramp fit tells a step from a ramp", "[detect][shape]") {
  RandomSource rng(42);
  std::vector<double> step, ramp;
  for (int t = 0; t < 200; ++t) {
    const double e = 0.3 * rng.Normal();
    step.push_back((t >= 80 ? 1.5 : 0.0) + e);
    ramp.push_back((t >= 60 ? 0.02 * (t - 59) : 0.0) + e);
  }
  const ChangeShape a = FitChangeShape(step);
  CHECK_FALSE(a.ramp);
  CHECK(a.step_at == Approx(80).margin(3));
  CHECK(a.step_size == Approx(1.5).margin(0.1));
  const ChangeShape b = FitChangeShape(ramp);
  CHECK(b.ramp);
  CHECK(b.ramp_at == Approx(60).margin(10));
  CHECK(b.slope == Approx(0.02).margin(0.003));
  // Exact fit: a noiseless ramp from index 5 leaves no residual.
  std::vector<double> exact(20, 0.0);
  for (int t = 5; t < 20; ++t) exact[t] = 0.5 * (t - 4);
  const ChangeShape c = FitChangeShape(exact);
  CHECK(c.ramp_at == 5);
  CHECK(c.slope == Approx(0.5));
  CHECK(c.sse_ramp == Approx(0.0).margin(1e-9));
  // The margin and minimum length keep a short or marginal ramp a step.
  CHECK_FALSE(FitChangeShape(exact, 0.0, 30).ramp);
}

TEST_CASE("periodogram matches numpy and finds the period", "[detect][cycles]") {
  // x_t = sin(2πt/16) + 0.3·((7t mod 5) − 2), t = 0..63, line removed; numpy.fft.fft:
  //   I₄ = 15.028361711457498, I₃ = 0.03476092232531632, I₃₂ = 9.646094936342093e-05.
  std::vector<double> x;
  for (int t = 0; t < 64; ++t) {
    x.push_back(std::sin(2.0 * std::numbers::pi * t / 16.0) + 0.3 * ((t * 7) % 5 - 2));
  }
  PeriodicityTest test(64, 0);
  const PeriodicityResult r = test.Evaluate(x);
  CHECK(test.ordinates()[4] == Approx(15.028361711457498).epsilon(1e-9));
  CHECK(test.ordinates()[3] == Approx(0.03476092232531632).epsilon(1e-6));
  CHECK(test.ordinates()[32] == Approx(9.646094936342093e-05).epsilon(1e-6));
  CHECK(r.bin == 4);
  CHECK(r.period == Approx(16.0).margin(0.5));
  CHECK(r.amplitude == Approx(1.0).margin(0.15));
  CHECK(r.p_value < 1e-6);

  // White noise: no significant cycle (fixed seed); alternation: period 2.
  RandomSource rng(9);
  std::vector<double> noise(512), alt(512);
  for (int t = 0; t < 512; ++t) {
    noise[t] = rng.Normal();
    alt[t] = noise[t] + (t % 2 ? 1.0 : -1.0);
  }
  PeriodicityTest big(512);
  CHECK(big.Evaluate(noise).p_value > 1e-3);
  const PeriodicityResult a = big.Evaluate(alt);
  CHECK(a.period == Approx(2.0).margin(0.05));
  CHECK(a.p_value < 1e-10);
  CHECK(a.amplitude == Approx(1.0).margin(0.15));
}

TEST_CASE("head CUSUMs name the head that fills off", "[detect][heads]") {
  HeadCusums heads(12, 1.0, 6.0);
  RandomSource rng(3);
  std::optional<HeadSignal> s;
  std::int64_t i = 0;
  for (; i < 2400 && !s; ++i) {
    const int h = static_cast<int>(i % 12);
    s = heads.Update(h, rng.Normal() + (h == 7 && i >= 1200 ? -3.0 : 0.0), i);
  }
  REQUIRE(s.has_value());
  CHECK(s->head == 7);
  CHECK(i > 1200);
  CHECK(i < 1200 + 12 * 8);  // (h + 1.166)/(3 − 1) ≈ 3.6 head packs on average
  CHECK(s->shift == Approx(-3.0).margin(1.2));
}

TEST_CASE("log-variance CUSUM standardises ln s² and catches a wider spread", "[detect][spread]") {
  // For ν = 4: E ln(χ²₄/4) = ψ(2) − ln 2 = 0.4227843 − 0.6931472 = −0.2703628,
  // Var = ψ′(2) = π²/6 − 1 = 0.6449341 (scipy.special.digamma / polygamma(1, 2)).
  LogVarianceCusum c(5, 0.5, 5.0);
  CHECK(c.LogSd() == Approx(std::sqrt(0.6449341)).epsilon(1e-6));
  // AR(1) check: n = 2, φ = 0.5 → 1 − 2/(2·1)·(1·0.5) = 0.5.
  CHECK(LogVarianceCusum::ExpectedVarianceRatio(2, 0.5) == Approx(0.5));
  CHECK(LogVarianceCusum::ExpectedVarianceRatio(12, 0.0) == Approx(1.0));
  RandomSource rng(17);
  int in_control_signals = 0;
  for (int i = 0; i < 5000; ++i) in_control_signals += c.Add(rng.Normal());
  CHECK(in_control_signals <= 1);
  c.Reset();
  int at = -1;
  for (int i = 0; i < 2000 && at < 0; ++i) {
    if (c.Add(1.6 * rng.Normal())) at = i;
  }
  CHECK(at > 0);
  CHECK(at < 400);
}

TEST_CASE("stuck reading: a run of identical readings, then release", "[detect][stuck]") {
  StuckReading s(5);
  CHECK(s.Update(500.1) == StuckReading::Event::kNone);
  for (int i = 0; i < 3; ++i) CHECK(s.Update(500.2) == StuckReading::Event::kNone);
  CHECK(s.Update(500.2) == StuckReading::Event::kNone);   // fourth 500.2
  CHECK(s.Update(500.2) == StuckReading::Event::kStuck);  // fifth
  CHECK(s.Update(500.2) == StuckReading::Event::kNone);
  CHECK(s.Update(499.9) == StuckReading::Event::kReleased);
  // With 2 % repeats, a chance run of r has probability 0.02^(r−1): r = 6 gives 3.2e-9 ≤ 1e-8.
  CHECK(StuckReading::MinRunFor(0.02, 1e-8, 3) == 6);
  CHECK(StuckReading::MinRunFor(0.0, 1e-8, 8) == 8);
}

TEST_CASE("settle fit: first-order decay on check-values series B", "[detect][settle]") {
  // check-values.md §5.1 series B: yᵢ = 10 + 8·0.7ⁱ ± 0.5; τ = −1/ln 0.7 = 2.804,
  // 2 % settling time 4τ = 11.2 (§5.2, common practice); MSER-5 cut 10.
  std::vector<double> b;
  double decay = 1.0;
  for (int i = 0; i < 50; ++i) {
    b.push_back(10.0 + 8.0 * decay + (i % 2 == 1 ? 0.5 : -0.5));
    decay *= 0.7;
  }
  const SettleEstimate e = EstimateSettling(b, 10);
  CHECK(e.mser_cut == 10);
  CHECK(e.model == SettleModel::kFirstOrder);
  CHECK(e.tau == Approx(2.804).epsilon(0.05));
  CHECK(e.settle_at == Approx(11).margin(1));
  CHECK(e.level == Approx(10.0).margin(0.1));
  CHECK(e.settled);
}

TEST_CASE("settle fit: under-damped approach with noise", "[detect][settle]") {
  // e(t) = A·e^{−ζωₙt}(cos ω_d t + ζ/√(1−ζ²) sin ω_d t): ζ = 0.3, natural period 40,
  // 4/(ζωₙ) = 4·40/(0.3·2π) = 84.9 packs.
  RandomSource rng(5);
  const double wn = 2.0 * std::numbers::pi / 40.0, zeta = 0.3;
  const double wd = wn * std::sqrt(1 - zeta * zeta);
  std::vector<double> x;
  for (int t = 0; t < 400; ++t) {
    const double e = std::exp(-zeta * wn * t) *
                     (std::cos(wd * t) + zeta / std::sqrt(1 - zeta * zeta) * std::sin(wd * t));
    x.push_back(500.0 + 8.0 * e + rng.Normal());
  }
  const SettleEstimate s = EstimateSettling(x, 50);
  CHECK(s.model == SettleModel::kUnderdamped);
  CHECK(s.settle_at == Approx(84.9).margin(17));  // the ±20 % target of the detection issue
  CHECK(s.level == Approx(500.0).margin(0.3));
  // Plain noise: no transient model, MSER decides and the cut is early.
  std::vector<double> flat;
  for (int t = 0; t < 300; ++t) flat.push_back(500.0 + rng.Normal());
  const SettleEstimate f = EstimateSettling(flat, 50);
  CHECK(f.model == SettleModel::kNone);
  CHECK(f.settle_at <= 75);
}

TEST_CASE("head pattern: the period of the per-head means", "[detect][heads]") {
  // Hand-worked: 12 heads, 10 packs each.
  const std::vector<double> count(12, 10.0);
  auto period = [&](const std::vector<double>& means) {
    std::vector<double> sum;
    for (double m : means) sum.push_back(10.0 * m);
    return HeadPatternPeriod({count, sum});
  };
  // Alternating ±1: period 2 leaves nothing unexplained.
  CHECK(period({1, -1, 1, -1, 1, -1, 1, -1, 1, -1, 1, -1}) == 2);
  // Every third head high: 3.
  CHECK(period({2, 0, 0, 2, 0, 0, 2, 0, 0, 2, 0, 0}) == 3);
  // One head off by 3: grand mean 0.25, total spread 11·0.25² + 2.75² = 8.25; the best
  // divisor, 6, pairs head 4 with head 10 and leaves 2·1.5² = 4.5 (55 %) unexplained,
  // above the 25 % allowed, so the period is the head count.
  CHECK(period({0, 0, 0, 0, 3, 0, 0, 0, 0, 0, 0, 0}) == 12);
  // Noisy alternation: class means ±1 leave 0.46 of the total 12.46 (4 %): still 2.
  CHECK(period({1.3, -1, 0.7, -1.2, 1, -0.8, 1.1, -1, 0.9, -1.3, 1, -0.7}) == 2);
  // A head with no packs, or flat means: the head count.
  std::vector<double> some(12, 10.0);
  some[3] = 0.0;
  const std::vector<double> sum(12, 0.0);
  CHECK(HeadPatternPeriod({some, sum}) == 12);
  CHECK(period(std::vector<double>(12, 0.5)) == 12);
}

TEST_CASE("robust baseline: the inflation's standard error matches its spread",
          "[detect][baseline]") {
  // InflationRelError() is the delta-method figure 1/sqrt((1−φ²)n), from the
  // large-sample variance (1−φ²)/n of the lag-1 autocorrelation (Bartlett's formula
  // for an AR(1); from memory). Check it against the spread of ln √((1+φ̂)/(1−φ̂))
  // over independent AR(1) baselines, φ = 0.15, n = 1200: the sample sd of 400
  // replicates is within about 3.5 % (1/√(2·399)) of the true sd, so 12 % allows
  // for that and the delta method's own error.
  RandomSource rng(31);
  const double phi = 0.15;
  const int n = 1200, reps = 400;
  double sum = 0.0, sum_sq = 0.0, claimed = 0.0;
  for (int r = 0; r < reps; ++r) {
    std::vector<double> g;
    double ar = rng.Normal();
    for (int i = 0; i < n; ++i) {
      ar = phi * ar + std::sqrt(1.0 - phi * phi) * rng.Normal();
      g.push_back(250.0 + 0.8 * ar);
    }
    RobustBaseline b;
    b.Learn(g, {}, 0);
    REQUIRE(b.ready());
    const double v = std::log(b.AutocorrelationInflation());
    sum += v;
    sum_sq += v * v;
    claimed += b.InflationRelError() / reps;
  }
  const double sd = std::sqrt((sum_sq - sum * sum / reps) / (reps - 1));
  CHECK(claimed == Approx(1.0 / std::sqrt((1.0 - phi * phi) * n)).epsilon(0.03));
  CAPTURE(sd, claimed);
  CHECK(sd == Approx(claimed).epsilon(0.12));
}

TEST_CASE("robust baseline: level, head offsets, sigma, phi, gross packs out",
          "[detect][baseline]") {
  RandomSource rng(8);
  const double offsets[4] = {0.5, -0.5, 0.25, -0.25};
  std::vector<double> g;
  std::vector<int> h;
  double ar = 0.0;
  for (int i = 0; i < 8000; ++i) {
    ar = 0.3 * ar + std::sqrt(1 - 0.09) * rng.Normal();
    double x = 340.0 + offsets[i % 4] + 1.2 * ar;
    if (i % 1000 == 500) x += 30.0;  // gross packs
    g.push_back(x);
    h.push_back(i % 4);
  }
  RobustBaseline b;
  b.Learn(g, h, 4);
  REQUIRE(b.ready());
  CHECK(b.excluded() == 8);
  CHECK(b.level() == Approx(340.0).margin(0.1));
  CHECK(b.offset(0) == Approx(0.5).margin(0.1));
  CHECK(b.offset(1) == Approx(-0.5).margin(0.1));
  CHECK(b.sigma() == Approx(1.2).epsilon(0.05));
  CHECK(b.phi() == Approx(0.3).margin(0.05));
  CHECK(b.AutocorrelationInflation() == Approx(std::sqrt(1.3 / 0.7)).epsilon(0.05));
  // Standard errors shrink as committed blocks come in.
  const double before = b.LevelStdError();
  for (int i = 0; i < 4000; ++i) b.Accumulate(340.0 + offsets[i % 4] + 1.2 * rng.Normal(), i % 4);
  b.CommitBlock();
  CHECK(b.LevelStdError() < before);
  CHECK(b.weight() == Approx(7992 + 4000));
  // A discarded block leaves the baseline alone.
  const double level = b.level();
  for (int i = 0; i < 500; ++i) b.Accumulate(350.0, i % 4);
  b.DiscardBlock();
  CHECK(b.level() == level);
}
