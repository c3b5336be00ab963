// Tests of the CUSUM ARL computations (core/design/cusum_arl.h, brook_evans_cusum.h)
// against check-values.md §4.3.
#include <catch2/catch.hpp>

#include <vector>

#include "core/design/brook_evans_cusum.h"
#include "core/design/cusum_arl.h"

using namespace heft;

namespace {

const std::vector<double> kDeltas = {0, 0.25, 0.5, 0.75, 1, 1.5, 2, 2.5, 3, 4};

// Printed to 2 decimals: within half a unit of the last digit.
constexpr double kPrinted = 0.005 + 1e-9;

}  // namespace

TEST_CASE("two-sided CUSUM ARL, k = 0.5, reproduces check-values §4.3", "[design]") {
  // check-values.md §4.3 [X] (Gauss–Legendre Nyström, 200 nodes, independent Python
  // computation); agree with Montgomery ISQC's table [M] after rounding.
  const std::vector<double> h4 = {167.68, 74.22, 26.63, 13.29, 8.38, 4.75, 3.34, 2.62, 2.19, 1.71};
  const std::vector<double> h5 = {465.44, 139.49, 38.00, 17.05, 10.38,
                                  5.75,   4.01,   3.11,  2.57,  2.01};
  for (std::size_t i = 0; i < kDeltas.size(); ++i) {
    INFO("delta = " << kDeltas[i]);
    CHECK(CusumTwoSidedArl(0.5, 4.0, kDeltas[i]) == Approx(h4[i]).margin(kPrinted));
    CHECK(CusumTwoSidedArl(0.5, 5.0, kDeltas[i]) == Approx(h5[i]).margin(kPrinted));
  }
}

TEST_CASE("one-sided CUSUM ARL, zero start and FIR, reproduces check-values §4.3", "[design]") {
  // check-values.md §4.3 [X], one-sided upper rows, and the FIR rows (head start h/2;
  // Lucas & Crosier 1982 for the head start idea).
  const std::vector<double> up4 = {335.37, 77.08, 26.68, 13.29, 8.38, 4.75, 3.34, 2.62, 2.19, 1.71};
  const std::vector<double> up5 = {930.89, 141.69, 38.01, 17.05, 10.38,
                                   5.75,   4.01,   3.11,  2.57,  2.01};
  const std::vector<double> fir4 = {316.38, 66.57, 20.25, 8.99, 5.29, 2.86, 2.01, 1.59, 1.33, 1.07};
  const std::vector<double> fir5 = {895.83, 124.93, 28.76, 11.24, 6.35,
                                    3.37,   2.36,   1.86,  1.54,  1.16};
  for (std::size_t i = 0; i < kDeltas.size(); ++i) {
    INFO("delta = " << kDeltas[i]);
    CHECK(CusumOneSidedArl(0.5, 4.0, kDeltas[i]) == Approx(up4[i]).margin(kPrinted));
    CHECK(CusumOneSidedArl(0.5, 5.0, kDeltas[i]) == Approx(up5[i]).margin(kPrinted));
    CHECK(CusumOneSidedArl(0.5, 4.0, kDeltas[i], 2.0) == Approx(fir4[i]).margin(kPrinted));
    CHECK(CusumOneSidedArl(0.5, 5.0, kDeltas[i], 2.5) == Approx(fir5[i]).margin(kPrinted));
  }
}

TEST_CASE("Nyström ARL is converged and the two-sided formula is consistent", "[design]") {
  // check-values.md §4.3 notes 100/400 nodes agree to 1e-9; the default node count
  // must agree with 400 nodes as closely.
  for (double h : {2.0, 4.0, 8.0, 12.0}) {
    for (double delta : {0.0, 0.5, 1.0, 2.0}) {
      INFO("h = " << h << ", delta = " << delta);
      CHECK(CusumOneSidedArl(0.5, h, delta) ==
            Approx(CusumOneSidedArl(0.5, h, delta, 0.0, 400)).epsilon(1e-8));
    }
  }
  // In control the two sides are mirror images: two-sided = one-sided / 2 exactly.
  CHECK(CusumTwoSidedArl(0.5, 5.0, 0.0) == Approx(CusumOneSidedArl(0.5, 5.0, 0.0) / 2.0));
  // The lower side at +delta is the upper side at −delta.
  const double up = CusumOneSidedArl(0.5, 4.0, 1.0);
  const double down = CusumOneSidedArl(0.5, 4.0, -1.0);
  CHECK(CusumTwoSidedArl(0.5, 4.0, 1.0) == Approx(1.0 / (1.0 / up + 1.0 / down)));
  // h = 0: each side alarms when x > k, ARL⁺ = 1/P(x > k) = 1/0.30854 (k = 0.5).
  CHECK(CusumOneSidedArl(0.5, 1e-9, 0.0) == Approx(1.0 / 0.3085375387).epsilon(1e-6));
}

TEST_CASE("Brook & Evans Markov chain converges to the integral-equation ARL", "[design]") {
  // Brook & Evans (1972) chain: error O(1/m²); with m = 200 and 400 and one
  // Richardson step the chain matches check-values.md §4.3 to its printed digits.
  const double chain = BrookEvansCusumArlExtrapolated(0.5, 4.0, 0.0, 200);
  CHECK(chain == Approx(335.37).margin(kPrinted));
  CHECK(chain == Approx(CusumOneSidedArl(0.5, 4.0, 0.0)).epsilon(2e-6));
  CHECK(BrookEvansCusumArlExtrapolated(0.5, 5.0, 1.0, 200) == Approx(10.38).margin(kPrinted));
  // Without extrapolation the error falls like 1/m²: quadrupling when m halves.
  const double exact = CusumOneSidedArl(0.5, 4.0, 0.0);
  const double e100 = exact - BrookEvansCusumArl(0.5, 4.0, 0.0, 100);
  const double e200 = exact - BrookEvansCusumArl(0.5, 4.0, 0.0, 200);
  CHECK(e100 / e200 == Approx(4.0).epsilon(0.05));
}

TEST_CASE("steady-state and ramp CUSUM ARLs agree with the zero-state ones where they must",
          "[design]") {
  // A ramp of slope 0 is no change: its ARL is the in-control ARL (zero state or
  // steady state), computed by a different route (forward law propagation).
  CHECK(CusumOneSidedRampArl(0.5, 4.0, 0.0, false) ==
        Approx(CusumOneSidedArl(0.5, 4.0, 0.0)).epsilon(1e-6));
  CHECK(CusumOneSidedRampArl(0.5, 4.0, 0.0, false, 2.0) ==
        Approx(CusumOneSidedArl(0.5, 4.0, 0.0, 2.0)).epsilon(1e-6));
  CHECK(CusumOneSidedRampArl(0.5, 4.0, 0.0, true) ==
        Approx(CusumOneSidedSteadyStateArl(0.5, 4.0, 0.0)).epsilon(1e-6));
  // Mid-run the sum is already above zero part of the time, so a step is caught
  // sooner than from a clean start, but later than from the h/2 head start.
  const double steady = CusumOneSidedSteadyStateArl(0.5, 5.0, 1.0);
  CHECK(steady < CusumOneSidedArl(0.5, 5.0, 1.0));
  CHECK(steady > CusumOneSidedArl(0.5, 5.0, 1.0, 2.5));
  // A steeper ramp is caught sooner.
  CHECK(CusumOneSidedRampArl(0.5, 8.0, 0.01, true) < CusumOneSidedRampArl(0.5, 8.0, 0.005, true));
}
