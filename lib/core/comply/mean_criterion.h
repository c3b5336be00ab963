// mean_criterion.h — the reference test's mean criterion x̄ ≥ Qn − k·s with
// k = t(q; n − 1)/√n (76/211/EEC Annex II §2.3; check-values.md §1.4).
//
// Used by the reference test and `heft limits`. Pure; thread-safe.
#pragma once

#include <span>

#include "core/model/status.h"

namespace heft::comply {

// Quantile of Student's t with `dof` degrees of freedom (Boost.Math).
// Requires dof ≥ 1 and 0 < p < 1; returns NaN otherwise.
double StudentTQuantile(double p, int dof);

// k = t(quantile; n − 1)/√n. Requires n ≥ 2; returns NaN otherwise.
double MeanCriterionFactor(int n, double quantile = 0.995);

struct MeanCheck {
  int n = 0;
  double mean = 0.0;
  double s = 0.0;  // sample standard deviation, n − 1 divisor
  double k = 0.0;
  double limit = 0.0;   // nominal − k·s
  double margin = 0.0;  // mean − limit; ≥ 0 passes
  bool pass = false;    // mean ≥ limit (acceptance "≥", rejection "<")
};

// Mean and sample SD of `sample` (two-pass). Requires at least one value; s is
// 0 for a single value.
void MeanAndSd(std::span<const double> sample, double* mean, double* s);

// Applies the criterion with factor `k` to `sample` (k = 0 gives x̄ ≥ Qn, the
// rule for whole small lots). Fails on an empty sample or a non-finite weight.
Status CheckMean(std::span<const double> sample, double nominal_g, double k, MeanCheck* out);

}  // namespace heft::comply
