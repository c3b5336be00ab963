// western_electric_arl.h — zero-state ARL of a Shewhart chart with Western Electric run rules.
//
// Rules (check-values.md §3.1; Western Electric Statistical Quality Control
// Handbook, 1956), zones in σ of the plotted statistic:
//   WE1 one point beyond 3σ (either side);
//   WE2 2 of 3 consecutive points beyond 2σ, same side;
//   WE3 4 of 5 consecutive points beyond 1σ, same side;
//   WE4 8 consecutive points on one side of the centre line.
// Method: a Markov chain whose state is the part of the recent past the
// enabled rules can still use (Champ & Woodall, Technometrics 29(4), 1987):
// for each of the last 4 points whether it lies beyond 2σ / beyond 1σ and on
// which side (only as far back as WE2 and WE3 look) and the signed length of
// the current same-side run (capped at 7, for WE4). States are found by a
// breadth-first walk from the empty history; each step the new point lands in
// one of 8 zones with normal probabilities for a mean shifted by δ. A zone
// pattern that completes an enabled rule is absorbing. ARLs solve
// (I − Q)·L = 1, here by Gauss–Seidel sweeps (Q is sparse: ≤ 8 entries a row).
// Reproduces check-values.md §3.3 (in control 91.75 with all four rules).
//
// Points exactly on a boundary have probability zero, so the "beyond" vs
// "at/beyond" wording does not matter for ARLs. Pure; thread-safe.
#pragma once

namespace heft {

struct WesternElectricRules {
  bool beyond_3_sigma = true;  // WE1
  bool two_of_three = true;    // WE2
  bool four_of_five = true;    // WE3
  bool eight_one_side = true;  // WE4
};

struct RunRuleArl {
  double arl = 0.0;  // zero-state ARL, points
  int states = 0;    // transient states of the chain
  bool converged = false;
};

// δ = shift of the mean in σ of the plotted statistic.
RunRuleArl WesternElectricArl(const WesternElectricRules& rules, double delta);

}  // namespace heft
