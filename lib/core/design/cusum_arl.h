// cusum_arl.h — average run length (ARL) of the tabular CUSUM on normal data.
//
// Standardised data x ~ N(δ, 1); upper sum S⁺ = max(0, S⁺ + x − k), alarm when
// S⁺ > h; the lower sum is the mirror image (its ARL at δ is the upper's at −δ).
//
// Method: the one-sided ARL L(u) from a start u ∈ [0, h] solves Page's (1954)
// integral equation — the continuous limit of the Brook & Evans (1972) Markov
// chain (see brook_evans_cusum.h for the chain itself):
//   L(u) = 1 + L(0)·Φ(k − u − δ) + ∫₀ʰ L(y)·φ(y + k − u − δ) dy,
// solved by the Nyström method on n Gauss–Legendre nodes (Goel & Wu 1971;
// Lucas & Crosier 1982), an (n+1)-unknown linear system: L(0) for the atom at
// zero and L at the nodes. The kernel is smooth on [0, h], so the error falls
// exponentially with n; the default node count reproduces check-values.md §4.3
// to far below its printed precision.
//
// Two-sided, zero start: 1/ARL = 1/ARL⁺ + 1/ARL⁻ (van Dobben de Bruyn 1968;
// Lucas & Crosier 1982). It is exact when both sums start at zero and k ≥ 0:
// then the two sums are never both positive when one of them signals, so after
// a (hypothetical) signal of one side the other side restarts afresh from zero
// and the renewal argument E N = E N⁺·P(N⁺ < N⁻) = E N⁻·P(N⁻ < N⁺) holds.
// With a head start (FIR) both sums may be positive together and the other side
// restarts from 0 rather than the head start, so the same formula is only an
// approximation (check-values.md §4.3 gives Monte Carlo values for h = 5).
//
// Steady-state ARL: the shift arrives after the chart has run in control for a
// long time without alarm, so the sum is distributed by the in-control chain's
// quasi-stationary law (its left Perron vector, found by power iteration); the
// ARL is L averaged over that law ("conditional" steady state).
//
// Used by core/design/arl_design and tests. Pure functions; thread-safe.
#pragma once

namespace heft {

// Nyström nodes enough for a relative error below about 1e-9 at this h
// (more nodes for a longer interval; the kernel has unit width).
int CusumArlNodes(double h);

// Upper one-sided CUSUM, S₀ = head_start (0 ≤ head_start ≤ h). nodes = 0: CusumArlNodes(h).
double CusumOneSidedArl(double k, double h, double delta, double head_start = 0.0, int nodes = 0);

// Two-sided CUSUM with both sums starting at head_start, from
// 1/ARL = 1/ARL⁺(δ) + 1/ARL⁺(−δ): exact for head_start = 0, approximate otherwise.
double CusumTwoSidedArl(double k, double h, double delta, double head_start = 0.0, int nodes = 0);

// Upper one-sided CUSUM, conditional steady state (see above).
double CusumOneSidedSteadyStateArl(double k, double h, double delta, int nodes = 0);

// Two-sided steady state from the one-sided ones by the same combination
// formula (an approximation: the two sides' in-control states are treated as
// independent; at shifts of interest the shifted side dominates).
double CusumTwoSidedSteadyStateArl(double k, double h, double delta, int nodes = 0);

// Upper one-sided CUSUM when the mean drifts linearly: the t-th observation
// after the start has mean slope·t σ (a ramp). Expected run length from the start, by pushing the
// state law forward one observation at a time on the same Nyström nodes. steady_start: the ramp
// begins during a long in-control run (quasi-stationary state); otherwise from head_start. For an
// upward ramp this is also, to within the lower side's negligible false-alarm chance, the two-sided
// CUSUM's delay.
double CusumOneSidedRampArl(double k, double h, double slope, bool steady_start,
                            double head_start = 0.0, int nodes = 0);

}  // namespace heft
