// arl_design.h — choose CUSUM and EWMA parameters from a target in-control ARL.
//
// The engineer states how rarely a detector may false-alarm (as an in-control
// ARL in packs, which core/detect/detector_design.h derives from false alarms
// per day and the pack rate) and the smallest mean shift worth catching. We
// then solve for the threshold that meets the ARL exactly and report the
// expected detection delay (the out-of-control ARL) for that shift:
//   CUSUM: k = shift/2 (the optimal reference for that shift, Page 1954;
//          Montgomery & Runger §16-10), h by root-finding on the exact two-sided
//          zero-start ARL (cusum_arl.h);
//   EWMA:  L for a given λ by root-finding on the zero-state ARL (ewma_arl.h);
//          optionally λ from a small grid, the one with the shortest zero-state
//          delay at the shift (the Lucas & Saccucci 1990 design criterion).
// Delays: zero state (shift present from the start), with the CUSUM's 50 %
// head start (FIR, what the line monitor uses after a start), and conditional
// steady state (shift arrives during a long in-control run).
// Root-finding: Illinois (modified regula falsi) on log ARL, which is nearly
// linear in h and in L, after bracketing. Pure functions; thread-safe.
#pragma once

#include <span>

#include "core/model/status.h"

namespace heft {

struct CusumDesign {
  double k = 0.0;
  double h = 0.0;
  double shift_sigma = 0.0;         // shift designed for
  double head_start = 0.0;          // FIR head start used for the *_fir figures
  double arl0 = 0.0;                // two-sided, zero start (exact)
  double arl0_fir = 0.0;            // two-sided with head start (approximate)
  double delay_zero_state = 0.0;    // two-sided ARL at the shift, zero start
  double delay_fir = 0.0;           // same, both sums started at the head start (approx.)
  double delay_steady_state = 0.0;  // conditional steady state (approx., see cusum_arl.h)
};

struct EwmaDesign {
  double lambda = 0.0;
  double limit = 0.0;  // L, in σ of the EWMA (asymptotic limits)
  double shift_sigma = 0.0;
  double arl0 = 0.0;              // zero state
  double delay_zero_state = 0.0;  // ARL at the shift, zero state
  double delay_steady_state = 0.0;
  double ramp_slope = 0.0;               // σ per observation, when designed for a ramp
  double ramp_delay_steady_state = 0.0;  // ramp starting mid-run (ewma_arl.h)
};

// The smallest h ≥ 0 whose two-sided zero-start ARL at δ = 0 equals target_arl0.
// Errors: k < 0 or not finite; target not finite, ≤ the ARL at h = 0, or > 1e10.
Status CusumDecisionIntervalForArl(double k, double target_arl0, double* h);

// k = shift/2, h from the target; all delays at `shift_sigma`.
// head_start_fraction: FIR head start as a share of h (0.5 = the usual 50 %).
Status DesignCusum(double target_arl0, double shift_sigma, double head_start_fraction,
                   CusumDesign* out);

// L (asymptotic limits) whose zero-state in-control ARL equals target_arl0.
// Errors: λ outside (0, 1]; target not finite, < 2, or > 1e10.
Status EwmaLimitForArl(double lambda, double target_arl0, double* limit);

// L for this λ, delays at `shift_sigma`.
Status DesignEwma(double target_arl0, double lambda, double shift_sigma, EwmaDesign* out);

// λ from `lambdas` (empty: kEwmaLambdaGrid) with the shortest zero-state delay
// at the shift, L for it, and its delays.
Status DesignEwmaChooseLambda(double target_arl0, double shift_sigma,
                              std::span<const double> lambdas, EwmaDesign* out);

// λ from `lambdas` (empty: kEwmaLambdaGrid) with the shortest steady-state
// delay for a ramp of `slope` σ per observation (a slow drift starting
// mid-run), L for it; the step delays are reported at `shift_sigma`.
Status DesignEwmaForRamp(double target_arl0, double slope, double shift_sigma,
                         std::span<const double> lambdas, EwmaDesign* out);

// Nyström nodes for delays (out-of-control ARLs converge much faster than the
// in-control tail): relative error below 1e-7 against 400 nodes for
// 0.01 ≤ λ ≤ 0.4, L ≤ 5 (checked when this was written).
int EwmaDelayNodes(double lambda, double limit);

// The default grid of λ (common practice: 0.05–0.25 for general use, smaller
// for long in-control runs and small shifts).
inline constexpr double kEwmaLambdaGrid[] = {0.02, 0.03, 0.05, 0.075, 0.1, 0.15, 0.2, 0.3};

}  // namespace heft
