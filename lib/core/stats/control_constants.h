// control_constants.h — control-chart constants d2, d3 (mean and sd of the range of n
// standard normal values) and c4 (bias of the sample sd), computed rather than copied.
//
// d2 = ∫ [1 − Φ(x)^n − (1 − Φ(x))^n] dx and E[W²] = ∫ w² f_W(w) dw with the range density
// f_W(w) = n(n−1) ∫ φ(x) φ(x+w) [Φ(x+w) − Φ(x)]^(n−2) dx, both by the trapezoidal rule on a
// fine grid (spectrally accurate for these smooth, fast-decaying integrands);
// d3 = sqrt(E[W²] − d2²); c4 = sqrt(2/(n−1)) Γ(n/2)/Γ((n−1)/2) via lgamma.
// Checked against check-values.md §2. The table is computed once, on first use (a few ms).
// Thread-safe (function-local static).
#pragma once

namespace heft {

// d2 for moving ranges of span 2 (individuals charts): 2/√π exactly.
inline constexpr double kD2Span2 = 1.1283791670955126;

inline constexpr int kMinSubgroup = 2;
inline constexpr int kMaxSubgroup = 25;

struct ControlConstants {
  int n = 0;
  double d2 = 0.0;
  double d3 = 0.0;
  double c4 = 0.0;
};

// Constants for subgroup size n in [kMinSubgroup, kMaxSubgroup]; n outside gives n = 0 and
// zeros.
ControlConstants ControlConstantsFor(int n);

// c4 by the closed form (any n >= 2).
double C4(int n);

}  // namespace heft
