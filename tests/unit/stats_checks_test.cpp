// Tests of the runs test, capability, control-chart constants and head comparison against
// hand-checkable examples and check-values.md §2 and §7. Tag [stats].
#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "core/stats/capability.h"
#include "core/stats/control_constants.h"
#include "core/stats/head_comparison.h"
#include "core/stats/runs_test.h"
#include "core/stats/window_summary.h"

namespace heft {
namespace {

// Montgomery & Runger 3rd ed., Table 16-7 data as given in check-values.md §4.2.
const std::vector<double> kBookData{102.0, 94.8,  98.3,  98.4,  102.0, 98.5,  99.0,
                                    97.7,  100.0, 98.1,  101.3, 98.7,  101.1, 98.4,
                                    97.0,  96.7,  100.3, 101.4, 97.2,  101.0};

TEST_CASE("Runs test: a trend gives two runs, an alternation the most", "[stats]") {
  // 1..10: median 5.5, five below then five above → 2 runs. n1 = n2 = 5:
  // E = 2·25/10 + 1 = 6, Var = 2·25·(50 − 10)/(100·9) = 20/9 (Wald & Wolfowitz 1940).
  // Exact P(R <= 2) = 2/C(10,5) = 2/252 (Swed & Eisenhart 1943 formula, by hand).
  std::vector<double> trend;
  for (int i = 1; i <= 10; ++i) trend.push_back(i);
  const RunsTestResult t = RunChart(trend);
  CHECK(t.centre == 5.5);
  CHECK(t.above == 5);
  CHECK(t.below == 5);
  CHECK(t.runs == 2);
  CHECK(t.longest_run == 5);
  CHECK(t.expected_runs == Approx(6.0));
  CHECK(t.variance == Approx(20.0 / 9.0));
  CHECK(t.exact);
  CHECK(*t.p_fewer == Approx(2.0 / 252.0).epsilon(1e-12));
  CHECK(*t.p_more == Approx(1.0).epsilon(1e-12));
  CHECK(*t.p_two_sided == Approx(4.0 / 252.0).epsilon(1e-12));
  CHECK(*t.z == Approx((2.0 - 6.0) / std::sqrt(20.0 / 9.0)));
  // 1,10,2,9,...: 10 runs, P(R >= 10) = P(R = 10) = 2/252.
  const std::vector<double> zigzag{1, 10, 2, 9, 3, 8, 4, 7, 5, 6};
  const RunsTestResult z = RunChart(zigzag);
  CHECK(z.runs == 10);
  CHECK(z.longest_run == 1);
  CHECK(*z.p_more == Approx(2.0 / 252.0).epsilon(1e-12));
}

TEST_CASE("Runs test: points on the median are dropped", "[stats]") {
  // Median of 1,2,3,3,3,4,5 is 3: the three 3s are dropped → below below above above.
  const RunsTestResult r = RunChart(std::vector<double>{1, 2, 3, 3, 3, 4, 5});
  CHECK(r.centre == 3.0);
  CHECK(r.on_centre == 3);
  CHECK(r.used == 4);
  CHECK(r.runs == 2);
  // One side only: no test.
  const RunsTestResult one = RunsAboutCentre(std::vector<double>{501, 502, 503}, 500.0);
  CHECK(one.runs == 1);
  CHECK_FALSE(one.p_fewer);
  CHECK(RunChart(std::vector<double>{}).runs == 0);
}

TEST_CASE("Runs test: exact distribution", "[stats]") {
  // Sums to 1 over the possible run counts.
  for (auto [n1, n2] : {std::pair<std::size_t, std::size_t>{5, 5}, {3, 12}, {20, 20}, {1, 7}}) {
    double total = 0.0;
    for (std::size_t r = 0; r <= n1 + n2; ++r) total += RunsProbability(n1, n2, r);
    CHECK(total == Approx(1.0).epsilon(1e-12));
  }
  // n1 = n2 = 10: P(R <= 6) = 0.018521725952066508 (exact with Python integers [X]);
  // Swed & Eisenhart's table gives 6 as the lower 0.025 critical value for 10, 10 [M].
  double fewer = 0.0;
  for (std::size_t r = 2; r <= 6; ++r) fewer += RunsProbability(10, 10, r);
  CHECK(fewer == Approx(0.018521725952066508).epsilon(1e-11));
  double fewer7 = 0.0;
  for (std::size_t r = 2; r <= 7; ++r) fewer7 += RunsProbability(10, 10, r);
  CHECK(fewer7 > 0.025);  // so 6, not 7, is the critical value
}

TEST_CASE("Capability: worked example of check-values.md §7", "[stats]") {
  // x̄ = 99.095, s = 1.97603, MR̄ = 2.589474 [X]; LSL 93, USL 105 (invented limits).
  const WindowSummary s = SummarizeSeries(kBookData);
  CHECK(s.mean == Approx(99.095).epsilon(1e-12));
  CHECK(s.sd == Approx(1.97603).margin(5e-6));  // printed to 5 decimals
  // σ_within with d2 = 2/√π (check-values.md §2: 2.29486 "using 2/√π").
  CHECK(s.mr_sigma == Approx(2.29486).epsilon(3e-6));
  // The sheet's indices use d2 rounded to 1.128 (σ = 2.29563): reproduce them with that sigma.
  const double mr_bar = s.mr_sigma * kD2Span2;
  CHECK(mr_bar == Approx(2.589474).epsilon(1e-6));
  const CapabilityData c = ComputeCapability(s.count, s.mean, mr_bar / 1.128, s.sd, 93.0, 105.0);
  CHECK(*c.cp == Approx(0.8712).margin(5e-5));
  CHECK(*c.cpk == Approx(0.8574).margin(5e-5));
  CHECK(*c.pp == Approx(1.0121).margin(5e-5));
  CHECK(*c.ppk == Approx(0.9961).margin(5e-5));
  CHECK(*c.cpk == *c.cpu);  // the mean is nearer the upper limit
  CHECK(c.lower_limit == 93.0);
  CHECK(c.upper_limit == 105.0);
  CHECK(c.sigma_overall == s.sd);
  // Here σ_within > s (zig-zag); on a drifting series the usual order σ_within < s appears.
  std::vector<double> drift;
  for (int i = 0; i < 40; ++i) drift.push_back(500.0 + 0.25 * i + (i % 2 == 0 ? 0.1 : -0.1));
  const WindowSummary d = SummarizeSeries(drift);
  CHECK(d.mr_sigma < d.sd);
  CHECK(s.mr_sigma > s.sd);
}

TEST_CASE("Capability: one-sided lower limit (nominal − TNE)", "[stats]") {
  // 500 g oats, TNE 15 g (check-values.md §1.2: 500–1000 g → 15 g) → lower limit 485 g.
  const CapabilityData c = ComputeCapability(1000, 503.0, 1.5, 2.0, 485.0, std::nullopt);
  CHECK_FALSE(c.cp);
  CHECK_FALSE(c.cpu);
  CHECK_FALSE(c.pp);
  CHECK(*c.cpl == Approx(18.0 / 4.5));
  CHECK(*c.cpk == *c.cpl);
  CHECK(*c.ppl == Approx(3.0));
  CHECK(*c.ppk == *c.ppl);
  // No spread or no data: no indices.
  CHECK_FALSE(ComputeCapability(1000, 503.0, 0.0, 0.0, 485.0, 515.0).cpk);
  CHECK_FALSE(ComputeCapability(1, 503.0, 1.0, 1.0, 485.0, 515.0).cpk);
}

TEST_CASE("Control-chart constants computed match check-values.md §2", "[stats]") {
  // [X] more digits: d2 and c4 to 6 decimals; d3 to 4 decimals from the table.
  const double d2[] = {1.128379, 1.692569, 2.058751, 2.325929, 2.534413,
                       2.704357, 2.847201, 2.970026, 3.077505};
  const double d3[] = {0.8525, 0.8884, 0.8798, 0.8641, 0.8480, 0.8332, 0.8198, 0.8078, 0.7971};
  const double c4[] = {0.797885, 0.886227, 0.921318, 0.939986, 0.951533,
                       0.959369, 0.965030, 0.969311, 0.972659};
  for (int n = 2; n <= 10; ++n) {
    const ControlConstants k = ControlConstantsFor(n);
    INFO("n = " << n);
    CHECK(k.n == n);
    CHECK(k.d2 == Approx(d2[n - 2]).margin(1.5e-6));
    CHECK(k.d3 == Approx(d3[n - 2]).margin(1e-4));
    CHECK(k.c4 == Approx(c4[n - 2]).margin(1.5e-6));
    // D4 = 1 + 3 d3/d2 (table, ±0.001 for the rounding artefacts noted in §2).
  }
  CHECK(1.0 + 3.0 * ControlConstantsFor(2).d3 / ControlConstantsFor(2).d2 ==
        Approx(3.267).margin(1e-3));
  CHECK(1.0 + 3.0 * ControlConstantsFor(3).d3 / ControlConstantsFor(3).d2 ==
        Approx(2.575).margin(1e-3));
  // Closed forms: d2(2) = 2/√π, d2(3) = 3/√π, d3(2) = √(2 − 4/π).
  CHECK(ControlConstantsFor(2).d2 == Approx(kD2Span2).epsilon(1e-10));
  CHECK(ControlConstantsFor(3).d2 == Approx(3.0 / std::sqrt(M_PI)).epsilon(1e-10));
  CHECK(ControlConstantsFor(2).d3 == Approx(std::sqrt(2.0 - 4.0 / M_PI)).epsilon(1e-9));
  CHECK(ControlConstantsFor(1).n == 0);
  CHECK(ControlConstantsFor(26).n == 0);
  CHECK(ControlConstantsFor(25).d2 > ControlConstantsFor(24).d2);
}

TEST_CASE("Head comparison: hand-checkable one-way ANOVA", "[stats]") {
  // Heads 1: {1,2,3}, 2: {2,3,4,5}, 3: {6,7,8}. Means 2, 3.5, 7; line mean 4.1;
  // SSB = 3·2.1² + 4·0.6² + 3·2.9² = 39.9, SSW = 2 + 5 + 2 = 9; F = (39.9/2)/(9/7) = 15.5167.
  // scipy.stats.f_oneway gives F 15.516666666666666, p 0.002674655031850484 [X].
  std::vector<HeadMoments> heads(3);
  const std::vector<std::vector<double>> data{{1, 2, 3}, {2, 3, 4, 5}, {6, 7, 8}};
  for (int h = 0; h < 3; ++h) {
    heads[h].head = h + 1;
    for (double x : data[h]) heads[h].moments.Add(x);
  }
  const HeadComparison c = CompareHeads(heads);
  CHECK(c.count == 10);
  CHECK(c.line_mean == Approx(4.1));
  CHECK(c.df_between == 2);
  CHECK(c.df_within == 7);
  REQUIRE(c.f);
  CHECK(*c.f == Approx(15.516666666666666).epsilon(1e-12));
  CHECK(*c.p_value == Approx(0.002674655031850484).epsilon(1e-9));
  REQUIRE(c.heads.size() == 3);
  CHECK(c.heads[2].offset == Approx(2.9));
  CHECK(c.farthest == std::vector<int>{3, 1, 2});  // |2.9| > |−2.1| > |−0.6|
  // One head: figures but no test.
  const HeadComparison single =
      CompareHeads(std::vector<HeadMoments>(heads.begin(), heads.begin() + 1));
  CHECK(single.heads.size() == 1);
  CHECK_FALSE(single.f);
}

}  // namespace
}  // namespace heft
