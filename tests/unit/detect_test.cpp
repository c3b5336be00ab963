// Tests of the detector building blocks against published worked examples and tables.
#include "core/detect/detector_design.h"
#include "core/detect/mser.h"
#include "core/detect/tabular_cusum.h"

#include <catch2/catch.hpp>

#include <vector>

using namespace heft;

TEST_CASE("tabular CUSUM reproduces Montgomery & Runger Example 16-6", "[detect][cusum]") {
  // Montgomery & Runger, Applied Statistics and Probability for Engineers, 3rd ed.,
  // Example 16-6 / Tables 16-7 and 16-8: mu0 = 99, K = 1, H = 10 (sigma = 1 here, so
  // z = x − 99). Recomputed in check-values.md §4.2 [S2]+[X]; n⁺ at i = 20 is 1 (the
  // book copy's 0 is a misprint per the recomputation).
  const std::vector<double> x = {102.0, 94.8, 98.3, 98.4, 102.0, 98.5, 99.0, 97.7, 100.0, 98.1,
                                 101.3, 98.7, 101.1, 98.4, 97.0,  96.7, 100.3, 101.4, 97.2, 101.0};
  const std::vector<double> upper = {2.0, 0.0, 0.0, 0.0, 2.0, 0.5, 0.0, 0.0, 0.0, 0.0,
                                     1.3, 0.0, 1.1, 0.0, 0.0, 0.0, 0.3, 1.7, 0.0, 1.0};
  const std::vector<int> upper_n = {1, 0, 0, 0, 1, 2, 0, 0, 0, 0, 1, 0, 1, 0, 0, 0, 1, 2, 0, 1};
  const std::vector<double> lower = {0.0, 3.2, 2.9, 2.5, 0.0, 0.0, 0.0, 0.3, 0.0, 0.0,
                                     0.0, 0.0, 0.0, 0.0, 1.0, 2.3, 0.0, 0.0, 0.8, 0.0};
  const std::vector<int> lower_n = {0, 1, 2, 3, 0, 0, 0, 1, 0, 0, 0, 0, 0, 0, 1, 2, 0, 0, 1, 0};
  TabularCusum cusum(1.0, 10.0);
  for (std::size_t i = 0; i < x.size(); ++i) {
    INFO("i = " << i + 1);
    CHECK(cusum.Update(x[i] - 99.0, static_cast<std::int64_t>(i)) == TabularCusum::Signal::kNone);
    CHECK(cusum.upper() == Approx(upper[i]).margin(1e-9));
    CHECK(cusum.upper_run() == upper_n[i]);
    CHECK(cusum.lower() == Approx(lower[i]).margin(1e-9));
    CHECK(cusum.lower_run() == lower_n[i]);
  }
}

TEST_CASE("tabular CUSUM signals, estimates size and onset", "[detect][cusum]") {
  TabularCusum cusum(0.5, 4.0);
  for (int i = 0; i < 10; ++i) REQUIRE(cusum.Update(0.0, i) == TabularCusum::Signal::kNone);
  // A shift of +2 sigma from record 10: S⁺ grows 1.5 per step and passes 4 at the 3rd step.
  REQUIRE(cusum.Update(2.0, 10) == TabularCusum::Signal::kNone);
  REQUIRE(cusum.Update(2.0, 11) == TabularCusum::Signal::kNone);
  REQUIRE(cusum.Update(2.0, 12) == TabularCusum::Signal::kUp);
  CHECK(cusum.upper_onset() == 10);
  // Montgomery & Runger eq. 16-32: new mean = mu0 + K + S⁺/n⁺ = 0.5 + 4.5/3 = 2.0.
  CHECK(cusum.EstimatedShift(TabularCusum::Signal::kUp) == Approx(2.0));
}

TEST_CASE("Siegmund's approximation is close to the exact CUSUM ARL table", "[detect][design]") {
  // Exact two-sided ARLs for k = 0.5 from check-values.md §4.3 [X] (integral equation;
  // agree with Montgomery ISQC's table [M]). Siegmund's formula is an approximation:
  // within 2 % in control and within 10 % for the 1-sigma shift is what it is known for.
  CHECK(SiegmundTwoSidedArl(0.5, 4.0, 0.0) == Approx(167.68).epsilon(0.02));
  CHECK(SiegmundTwoSidedArl(0.5, 5.0, 0.0) == Approx(465.44).epsilon(0.02));
  CHECK(SiegmundTwoSidedArl(0.5, 4.0, 1.0) == Approx(8.38).epsilon(0.10));
  CHECK(SiegmundTwoSidedArl(0.5, 5.0, 1.0) == Approx(10.38).epsilon(0.10));
  // Solving back for h gives the table's h.
  CHECK(CusumDecisionInterval(0.5, SiegmundTwoSidedArl(0.5, 5.0, 0.0)) == Approx(5.0).epsilon(1e-6));
}

TEST_CASE("individuals limit matches the Shewhart 3-sigma ARL of 370.4", "[detect][design]") {
  // check-values.md §3.3: ARL = 1/p with p = 2·Φ(−3) = 0.0026998 → 370.40 [X][S2].
  CHECK(IndividualsLimit(370.398) == Approx(3.0).epsilon(1e-4));
}

TEST_CASE("detector design turns a daily false-alarm budget into thresholds", "[detect][design]") {
  const DetectorDesign d = DesignDetectors(1.0, 120.0, 1.0);
  CHECK(d.arl0_packs == Approx(172800.0));
  CHECK(d.cusum_k == Approx(0.5));
  // The CUSUM gets half the budget: in-control ARL of two days of packs.
  CHECK(d.cusum_arl0 == Approx(2.0 * 172800.0).epsilon(1e-6));
  CHECK(d.cusum_h > 5.0);
  CHECK(d.cusum_delay_packs < 30.0);  // the 1-sigma target delay of the detection issue
  CHECK(d.individuals_limit > 4.0);
  // A looser budget gives tighter thresholds.
  const DetectorDesign loose = DesignDetectors(24.0, 120.0, 1.0);
  CHECK(loose.cusum_h < d.cusum_h);
  CHECK(loose.individuals_limit < d.individuals_limit);
}

TEST_CASE("MSER picks the truncation of check-values series A", "[detect][mser]") {
  // check-values.md §5.1 series A [X]: MSER(d), d = 0..10, minimum at d = 3.
  const std::vector<double> a = {20, 15, 12, 10, 10.5, 9.5, 10, 10.5, 9.5, 10,
                                 10.5, 9.5, 10, 10.5, 9.5, 10, 10.5, 9.5, 10, 10};
  const std::vector<double> expected = {0.29263, 0.08011, 0.01938, 0.00865, 0.00977, 0.00993,
                                        0.01020, 0.01183, 0.01201, 0.01240, 0.01500};
  const std::vector<double> curve = MserCurve(a);
  REQUIRE(curve.size() == expected.size());
  for (std::size_t d = 0; d < expected.size(); ++d) {
    CHECK(curve[d] == Approx(expected[d]).margin(5e-6 + 1e-12));  // printed to 5 decimals
  }
  const MserResult r = Mser(a);
  CHECK(r.truncate == 3);
  CHECK_FALSE(r.at_search_limit);
}

TEST_CASE("MSER-5 truncates check-values series B at 10 observations", "[detect][mser]") {
  // check-values.md §5.1 series B [X]: y_i = 10 + 8·0.7^i ± 0.5, i = 0..49.
  std::vector<double> b;
  double decay = 1.0;
  for (int i = 0; i < 50; ++i) {
    b.push_back(10.0 + 8.0 * decay + (i % 2 == 1 ? 0.5 : -0.5));
    decay *= 0.7;
  }
  const MserResult r = MserBatched(b, 5);
  CHECK(r.truncate == 10);
  CHECK(r.statistic == Approx(0.001123).margin(5e-7));
}
