// ewma_arl.h — average run length (ARL) of the EWMA chart on normal data.
//
// Standardised data x ~ N(δ, 1); zᵢ = (1 − λ)·zᵢ₋₁ + λ·xᵢ, z₀ = 0 (the target);
// alarm when |z| > c with the asymptotic limit c = L·√(λ/(2 − λ)).
//
// Method: the ARL L(u) from a start u ∈ [−c, c] solves the integral equation
//   L(u) = 1 + (1/λ)·∫₋꜀ᶜ L(y)·φ((y − (1 − λ)u)/λ − δ) dy
// (Crowder, Technometrics 29(4), 1987), solved by the Nyström method on
// Gauss–Legendre nodes. Lucas & Saccucci (Technometrics 32(1), 1990) used the
// Brook & Evans Markov chain on the same equation; both converge to the same
// values. The kernel has width λ on an interval of width 2c, so small λ needs
// more nodes (EwmaArlNodes). In control the solution is even, L(u) = L(−u),
// which halves the system (used when δ = 0). Reproduces check-values.md §4.4.
//
// Steady state: as for the CUSUM (cusum_arl.h), L averaged over the
// quasi-stationary law of the in-control chart given no alarm.
//
// Used by core/design/arl_design and tests. Pure functions; thread-safe.
#pragma once

namespace heft {

// Asymptotic half-width of the limits in σ of the data: L·√(λ/(2 − λ)).
double EwmaAsymptoticLimit(double lambda, double limit);

// Exact half-width after i ≥ 1 points, z₀ = target:
// L·√(λ/(2 − λ)·[1 − (1 − λ)^{2i}]) (check-values.md §4.4).
double EwmaLimitAt(double lambda, double limit, int i);

// Nyström nodes enough for a relative error below about 1e-6 (more for small λ).
int EwmaArlNodes(double lambda, double limit);

// Zero-state ARL (asymptotic limits, start at z₀ = start, in σ of the data).
// nodes = 0: EwmaArlNodes.
double EwmaArl(double lambda, double limit, double delta, double start = 0.0, int nodes = 0);

// Conditional steady-state ARL (asymptotic limits).
double EwmaSteadyStateArl(double lambda, double limit, double delta, int nodes = 0);

// Expected run length when the mean drifts linearly: the t-th observation
// after the start has mean slope·t σ (a ramp), by pushing the law of z forward
// one observation at a time on the Nyström nodes. steady_start: the ramp
// begins during a long in-control run; otherwise z starts at the target.
double EwmaRampArl(double lambda, double limit, double slope, bool steady_start, int nodes = 0);

}  // namespace heft
