// Tests of the EWMA ARL computations (core/design/ewma_arl.h) and of the EWMA chart
// the line monitor uses (core/detect/ewma_chart.h) against check-values.md §4.4–4.5.
#include <catch2/catch.hpp>

#include <vector>

#include "core/design/ewma_arl.h"
#include "core/detect/ewma_chart.h"

using namespace heft;

TEST_CASE("EWMA ARL reproduces the Lucas & Saccucci rows of check-values §4.4", "[design]") {
  // check-values.md §4.4 [X] (Gauss–Legendre integral equation, 300 nodes), rows for
  // Lucas & Saccucci (1990) Table 3 (λ, L) pairs [M]; test tolerance 1 % as the sheet says.
  struct Row {
    double lambda, limit;
    std::vector<double> arl;
  };
  const std::vector<double> deltas = {0, 0.25, 0.5, 0.75, 1, 1.5, 2, 2.5, 3, 4};
  const std::vector<Row> rows = {
      {0.05, 2.615, {499.9, 84.0, 28.8, 16.4, 11.4, 7.1, 5.2, 4.2, 3.5, 2.7}},
      {0.10, 2.814, {499.6, 106.3, 31.3, 15.8, 10.3, 6.1, 4.4, 3.4, 2.9, 2.2}},
      {0.20, 2.962, {499.7, 150.2, 41.8, 18.1, 10.5, 5.5, 3.7, 2.9, 2.4, 1.9}},
      {0.25, 2.998, {499.8, 170.3, 48.3, 20.1, 11.1, 5.5, 3.6, 2.7, 2.3, 1.7}},
      {0.40, 3.054, {500.0, 223.7, 71.2, 28.4, 14.3, 5.9, 3.5, 2.5, 2.0, 1.4}},
      {0.10, 2.7, {369.0, 89.1, 28.2, 14.7, 9.7, 5.8, 4.2, 3.3, 2.8, 2.1}},
      {0.30, 3.0, {465.6, 178.7, 53.2, 21.8, 11.7, 5.4, 3.5, 2.6, 2.1, 1.6}},
  };
  for (const Row& row : rows) {
    for (std::size_t i = 0; i < deltas.size(); ++i) {
      INFO("lambda = " << row.lambda << ", L = " << row.limit << ", delta = " << deltas[i]);
      // 1 % or half a printed unit (the printed 1-decimal values of ~1.4 round by up to 3.5 %).
      const double tolerance = std::max(0.01 * row.arl[i], 0.05 + 1e-9);
      CHECK(EwmaArl(row.lambda, row.limit, deltas[i]) == Approx(row.arl[i]).margin(tolerance));
    }
  }
  // The headline pair of the brief: λ = 0.10, L = 2.814 → 499.6 in control, 10.3 at δ = 1.
  CHECK(EwmaArl(0.10, 2.814, 0.0) == Approx(499.6).epsilon(0.001));
  CHECK(EwmaArl(0.10, 2.814, 1.0) == Approx(10.3).epsilon(0.01));
}

TEST_CASE("EWMA ARL is converged and symmetric", "[design]") {
  for (double lambda : {0.02, 0.1, 0.4}) {
    for (double delta : {0.0, 0.5, 1.5}) {
      INFO("lambda = " << lambda << ", delta = " << delta);
      CHECK(EwmaArl(lambda, 3.0, delta) ==
            Approx(EwmaArl(lambda, 3.0, delta, 0.0, 400)).epsilon(1e-7));
      // A downward shift is as easy to catch as an upward one.
      CHECK(EwmaArl(lambda, 3.0, -delta) == Approx(EwmaArl(lambda, 3.0, delta)).epsilon(1e-9));
    }
  }
  // λ = 1 is the Shewhart chart: limits ±L, ARL = 1/(2Φ(−3)) = 370.40 (check-values §3.3).
  CHECK(EwmaArl(1.0, 3.0, 0.0) == Approx(370.40).margin(0.005));
  // Steady state and ramp (slope 0) agree with the in-control ARL by another route.
  CHECK(EwmaRampArl(0.1, 2.814, 0.0, false) == Approx(EwmaArl(0.1, 2.814, 0.0)).epsilon(1e-6));
  CHECK(EwmaRampArl(0.1, 2.814, 0.0, true) ==
        Approx(EwmaSteadyStateArl(0.1, 2.814, 0.0)).epsilon(1e-6));
}

TEST_CASE("EWMA time-varying limit factors of check-values §4.4", "[design]") {
  // check-values.md §4.4 [X]: L·√(λ/(2−λ)·[1 − (1−λ)^{2i}]), i = 1..6.
  const std::vector<double> a = {0.60000, 0.76837, 0.85899, 0.91227, 0.94479, 0.96503};
  const std::vector<double> b = {0.27000, 0.36325, 0.42400, 0.46746, 0.49990, 0.52471};
  for (int i = 1; i <= 6; ++i) {
    INFO("i = " << i);
    CHECK(EwmaLimitAt(0.2, 3.0, i) == Approx(a[i - 1]).margin(5e-6));
    CHECK(EwmaLimitAt(0.1, 2.7, i) == Approx(b[i - 1]).margin(5e-6));
    // The chart the monitor uses computes the same factor.
    CHECK(EwmaChart::LimitFactor(0.2, 3.0, i) == Approx(a[i - 1]).margin(5e-6));
    CHECK(EwmaChart::LimitFactor(0.1, 2.7, i) == Approx(b[i - 1]).margin(5e-6));
  }
  CHECK(EwmaAsymptoticLimit(0.2, 3.0) == Approx(1.0));
  CHECK(EwmaAsymptoticLimit(0.1, 2.7) == Approx(0.61942).margin(5e-6));
}

TEST_CASE("EWMA chart reproduces the NIST/SEMATECH §6.3.2.4 example", "[design]") {
  // check-values.md §4.5: target 50, s = 2.0539, λ = 0.3, L = 3, asymptotic limits
  // (data [M], values recomputed [X]; the 15th EWMA is 49.38, not the remembered 49.34).
  const std::vector<double> x = {52.0, 47.0, 53.0, 49.3, 50.1, 47.0, 51.0, 50.1, 51.2, 50.5,
                                 49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1};
  const std::vector<double> ewma = {50.60, 49.52, 50.56, 50.18, 50.16, 49.21, 49.75,
                                    49.85, 50.26, 50.33, 50.11, 49.36, 49.52, 50.05,
                                    49.38, 49.92, 50.73, 51.23, 51.94, 51.99};
  const double target = 50.0, s = 2.0539;
  // The monitor's chart works on standardised values: z = (x − target)/s, and the
  // EWMA of z maps back linearly.
  EwmaChart chart(0.3, 3.0);
  CHECK(target + s * chart.HalfWidth() == Approx(52.5884).margin(5e-5));
  CHECK(target - s * chart.HalfWidth() == Approx(47.4116).margin(5e-5));
  for (std::size_t i = 0; i < x.size(); ++i) {
    INFO("point " << i + 1);
    CHECK(chart.Update((x[i] - target) / s) == EwmaChart::Signal::kNone);  // none leaves
    CHECK(target + s * chart.value() == Approx(ewma[i]).margin(0.005 + 1e-9));
  }
}
