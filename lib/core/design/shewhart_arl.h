// shewhart_arl.h — ARL of a Shewhart chart for individuals or subgroup means.
//
// Rule 1 only (one point beyond ±L σ of the plotted statistic): each point
// signals independently with p = Φ(−L − δ√n) + 1 − Φ(L − δ√n), so the run
// length is geometric and ARL = 1/p (check-values.md §3.3; in control with
// L = 3: 370.40). δ is the shift of the process mean in σ of single values;
// a subgroup mean of n values moves δ√n of its own σ. Pure; thread-safe.
#pragma once

namespace heft {

// Probability that one plotted point falls outside ±limit.
double ShewhartSignalProbability(double limit, double delta, int subgroup = 1);

// 1/p (infinite when p underflows to 0).
double ShewhartArl(double limit, double delta, int subgroup = 1);

}  // namespace heft
