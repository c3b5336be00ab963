// gauss_legendre.h — Gauss–Legendre quadrature nodes and weights on [a, b].
//
// The n-point rule integrates polynomials of degree 2n − 1 exactly; the ARL
// integral equations (core/design/cusum_arl.h, ewma_arl.h) are solved by the
// Nyström method on these nodes. Nodes come from Newton's method on the
// Legendre polynomial Pₙ started at the Chebyshev-like guesses
// cos(π(i − ¼)/(n + ½)) (Abramowitz & Stegun 25.4.29 / Numerical Recipes
// §4.6), once per point count and thread (memoised). Pure; thread-safe.
#pragma once

#include <vector>

namespace heft {

struct QuadratureRule {
  std::vector<double> nodes;    // ascending
  std::vector<double> weights;  // same order; sum to b − a
};

// n ≥ 1 points on [a, b].
QuadratureRule GaussLegendre(int n, double a, double b);

}  // namespace heft
