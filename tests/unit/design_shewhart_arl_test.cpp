// Tests of the Shewhart and Western Electric run-rule ARLs (core/design/shewhart_arl.h,
// western_electric_arl.h) against check-values.md §3.3.
#include <catch2/catch.hpp>

#include <vector>

#include "core/design/shewhart_arl.h"
#include "core/design/western_electric_arl.h"

using namespace heft;

TEST_CASE("Shewhart 3-sigma ARL table of check-values §3.3", "[design]") {
  // check-values.md §3.3 [X]; in control 370.4 also [S2] (Prajapati, WCECS 2013).
  const std::vector<double> deltas = {0, 0.25, 0.5, 0.75, 1, 1.5, 2, 2.5, 3, 4};
  const std::vector<double> arl = {370.40, 281.15, 155.22, 81.22, 43.89,
                                   14.97,  6.30,   3.24,   2.00,  1.19};
  for (std::size_t i = 0; i < deltas.size(); ++i) {
    INFO("delta = " << deltas[i]);
    CHECK(ShewhartArl(3.0, deltas[i]) == Approx(arl[i]).margin(0.005 + 1e-9));
  }
  // X-bar chart of subgroup n: the shift moves δ√n (check-values.md §3.3).
  CHECK(ShewhartArl(3.0, 1.0, 4) == Approx(6.30).margin(0.005));
  CHECK(ShewhartArl(3.0, 1.0, 5) == Approx(4.50).margin(0.005));
}

TEST_CASE("Western Electric rules ARL by Markov chain, check-values §3.3", "[design]") {
  // check-values.md §3.3 [X] (exact zero-state Markov chain); all four rules in control
  // 91.75 = Champ & Woodall, Technometrics 29(4), 1987 ([S2] via the Wikipedia summary).
  const std::vector<double> deltas = {0, 0.2, 0.4, 0.5, 0.6, 0.8, 1.0, 1.5, 2.0, 2.5, 3.0};
  struct Row {
    WesternElectricRules rules;
    std::vector<double> arl;
  };
  const std::vector<Row> rows = {
      {{true, true, true, true},
       {91.75, 66.80, 36.61, 27.33, 20.91, 13.25, 9.22, 4.87, 3.13, 2.21, 1.67}},
      {{true, true, false, false},
       {225.44, 177.56, 104.46, 77.72, 57.92, 33.12, 20.01, 7.30, 3.65, 2.29, 1.68}},
      {{true, false, true, false},
       {166.05, 120.70, 63.88, 46.18, 33.99, 19.78, 12.66, 5.86, 3.68, 2.60, 1.89}},
      {{true, false, false, true},
       {152.73, 110.52, 59.76, 44.28, 33.64, 21.07, 14.58, 7.75, 4.89, 3.08, 1.99}},
  };
  for (std::size_t r = 0; r < rows.size(); ++r) {
    for (std::size_t i = 0; i < deltas.size(); ++i) {
      INFO("row " << r << ", delta = " << deltas[i]);
      const RunRuleArl result = WesternElectricArl(rows[r].rules, deltas[i]);
      CHECK(result.converged);
      CHECK(result.arl == Approx(rows[r].arl[i]).margin(0.005 + 1e-9));
    }
  }
  // Rule 1 alone is the Shewhart chart (a one-state chain).
  const RunRuleArl alone = WesternElectricArl({true, false, false, false}, 0.0);
  CHECK(alone.states == 1);
  CHECK(alone.arl == Approx(ShewhartArl(3.0, 0.0)).epsilon(1e-9));
}
