// brook_evans_cusum.h — the Brook & Evans (1972) Markov chain for the one-sided CUSUM.
//
// The interval [0, h] is cut into m states of width w = 2h/(2m − 1): state 0 is
// [0, w/2) (it holds the atom at zero), state i ≥ 1 is [(i − ½)w, (i + ½)w)
// with representative value i·w; beyond (m − ½)w = h is the absorbing alarm
// state. From state i, x ~ N(δ, 1) moves the sum to i·w + x − k:
//   P(i → 0) = Φ(w/2 − i·w + k − δ),
//   P(i → j) = Φ((j + ½)w − i·w + k − δ) − Φ((j − ½)w − i·w + k − δ).
// ARLs solve (I − Q)·L = 1 (Brook & Evans, Biometrika 59(3), 1972, 539–551).
// The discretisation error falls like 1/m², so two chains (m and 2m) and one
// Richardson step, (4·L₂ₘ − Lₘ)/3, give several more digits.
//
// Kept as an independent check on the Nyström solution in cusum_arl.h (which
// is what the design functions use: faster and more precise). Pure; thread-safe.
#pragma once

namespace heft {

// Zero-start ARL of the upper one-sided CUSUM from an m-state chain (m ≥ 2).
double BrookEvansCusumArl(double k, double h, double delta, int states);

// Richardson extrapolation of the chains with m and 2m states.
double BrookEvansCusumArlExtrapolated(double k, double h, double delta, int states);

}  // namespace heft
