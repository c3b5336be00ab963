// runs_test.h — run-chart data: the runs-about-the-centre test on a series in time order.
//
// Centre line: the median (default; type 7, which for the median equals type 6) or the
// mean. Convention: points equal to the centre are dropped before counting (they belong
// to neither side). With n1 points above and n2 below:
//   E[R] = 2 n1 n2/(n1 + n2) + 1,
//   Var[R] = 2 n1 n2 (2 n1 n2 − n1 − n2) / ((n1 + n2)² (n1 + n2 − 1))
// (Wald & Wolfowitz, Ann. Math. Statist. 11, 1940). p-values come from the exact
// distribution of R given n1, n2 (Swed & Eisenhart, Ann. Math. Statist. 14, 1943, whose
// tables cover n1, n2 <= 20) when n1 + n2 <= 100 or min(n1, n2) <= 20, else from the
// normal approximation without continuity correction. Too few runs point to shifts,
// clusters or trends; too many to oscillation (over-adjustment).
// Used by the detectors and `heft stats`. Pure; thread-safe.
#pragma once

#include <span>

#include "core/stats/stats_types.h"

namespace heft {

RunsTestResult RunsAboutCentre(std::span<const double> series, double centre,
                               CentreLine line = CentreLine::kMedian);
// Computes the centre (median or mean) of `series`, then RunsAboutCentre.
RunsTestResult RunChart(std::span<const double> series, CentreLine line = CentreLine::kMedian);

// Exact P(R = r) given n1, n2 (Swed & Eisenhart 1943); 0 for impossible r.
double RunsProbability(std::size_t n1, std::size_t n2, std::size_t r);

}  // namespace heft
