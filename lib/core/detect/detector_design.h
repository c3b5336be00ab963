// detector_design.h — choose detector thresholds from a false-alarm budget in time.
//
// A checkweigher reports every pack, so a rule with an in-control ARL of 370
// would alarm every few minutes. The engineer states false alarms per day and
// the pack rate; we turn that into an in-control ARL in packs, share it out
// among the detectors, and solve each detector's threshold for its share:
// the CUSUM's h from the exact (Brook & Evans / integral-equation) ARL, the
// EWMA's L likewise (core/design/arl_design.h), the individuals limit in
// closed form. Siegmund's approximation is kept for comparison and tests.
// Used by LineMonitor (once per line at start-up) and `heft design`.
// Pure functions; thread-safe.
#pragma once

#include "core/model/status.h"

namespace heft {

// Siegmund's approximation to the ARL of a one-sided CUSUM with reference k and
// decision interval h (both in σ) when the mean is shifted by delta σ:
//   ARL ≈ (e^{−2Δb} + 2Δb − 1) / (2Δ²),  Δ = δ − k, b = h + 1.166;  b² when Δ = 0.
// (Siegmund, Sequential Analysis, 1985; as used in Montgomery, ISQC §9.1.)
double SiegmundOneSidedArl(double k, double h, double delta);

// Two-sided ARL from the one-sided ones: 1/ARL = 1/ARL⁺ + 1/ARL⁻.
double SiegmundTwoSidedArl(double k, double h, double delta);

// Smallest h whose two-sided Siegmund ARL at delta = 0 reaches `arl0`.
double CusumDecisionInterval(double k, double arl0);

// Two-sided individuals limit L (in σ) with in-control ARL `arl0`: L = Φ⁻¹(1 − 1/(2·arl0)).
double IndividualsLimit(double arl0);

// Shares of the line's false-alarm budget (the rest, 1/8, is left for the
// run rules, spread, stuck and the other detectors).
inline constexpr double kCusumBudgetShare = 0.5;
inline constexpr double kIndividualsBudgetShare = 0.25;
inline constexpr double kEwmaBudgetShare = 0.125;

struct DetectorDesign {
  double arl0_packs = 0;         // in-control ARL for the whole line, packs
  double min_shift_sigma = 1.0;  // smallest mean step worth catching
  // Shift detector: two-sided tabular CUSUM, k = shift/2, h solved exactly.
  double cusum_k = 0.5;
  double cusum_h = 5.0;
  double cusum_arl0 = 0;                // two-sided, zero start, packs (Brook & Evans / Nyström)
  double cusum_delay_packs = 0;         // two-sided zero-start ARL at min_shift_sigma
  double cusum_head_start = 0;          // h/2: the FIR start LineMonitor uses after a start
  double cusum_arl0_fir = 0;            // in-control ARL from the head start (approximate)
  double cusum_delay_fir_packs = 0;     // delay at min_shift from the head start (approx.)
  double cusum_delay_steady_packs = 0;  // delay when the shift comes mid-run (approx.)
  // Gross-shift check on single packs.
  double individuals_limit = 3.0;      // L in σ
  double individuals_arl0 = 0;         // packs
  double individuals_delay_packs = 0;  // ARL at min_shift_sigma
  // Drift detector: EWMA with asymptotic limits ±L·√(λ/(2−λ)) σ around the level,
  // λ with the shortest delay for the design ramp, L from its budget share.
  double ewma_shift_sigma = 0.5;  // step size its delays are reported for (min_shift / 2)
  double ewma_lambda = 0.05;
  double ewma_limit = 3.0;      // L
  double ewma_arl0 = 0;         // zero state, packs
  double ewma_delay_packs = 0;  // zero-state ARL at ewma_shift_sigma
  double ewma_delay_steady_packs = 0;
  // Drift: a ramp of drift_sigma_per_pack starting mid-run (λ chosen for it).
  double drift_sigma_per_pack = 0.005;
  double ewma_ramp_delay_packs = 0;   // EWMA, steady state
  double cusum_ramp_delay_packs = 0;  // the shift CUSUM on the same ramp, steady state
  bool exact = true;                  // false: fell back to Siegmund / defaults (see status)
};

struct DesignTargets {
  double packs_per_minute = 0.0;      // observed or configured rate, > 0
  double false_alarms_per_day = 1.0;  // per line, of running time, > 0
  double min_shift_sigma = 1.0;       // in σ of single packs, (0, 10]
  double ewma_lambda = 0.0;           // 0: choose from kDriftLambdaGrid for the ramp
  // The slow drift the EWMA is tuned for, σ per pack (default: the detection
  // issue's test ramp of 1σ per 200 packs).
  double drift_sigma_per_pack = 0.005;
};

// λ candidates for the drift EWMA (kept short: DesignDetectors runs at start-up).
inline constexpr double kDriftLambdaGrid[] = {0.02, 0.03, 0.05, 0.075, 0.1};

// The full design with checked inputs; errors say which input is wrong and why.
Status DesignLineDetectors(const DesignTargets& targets, DetectorDesign* out);

// The full design that never fails (for planning: `heft design`, reports). Inputs
// are clamped to sane ranges (rate ≥ 1/min, 1e-3 ≤ false alarms/day, 0.1 ≤ shift
// ≤ 5); if the exact design still fails it falls back to Siegmund's h and `exact`
// is false.
DetectorDesign DesignDetectors(double false_alarms_per_day, double packs_per_minute,
                               double min_shift_sigma);

// What a LineMonitor needs at construction, with DesignDetectors' clamping and
// figures: the line's in-control ARL budget and the individuals limit. The shift
// CUSUM is designed when the detectors are armed (DesignShiftCusum, for the learnt
// autocorrelation) and the drift EWMA's λ comes from the settings, so DesignDetectors'
// delays and λ search (tens of milliseconds) are not needed to run a line.
struct LineBudget {
  double arl0_packs = 0;         // in-control ARL for the whole line, packs
  double individuals_limit = 3;  // L in σ for single wild packs
};
LineBudget DesignLineBudget(double false_alarms_per_day, double packs_per_minute,
                            double min_shift_sigma);

// Only the shift CUSUM of DesignDetectors (the same clamping, the same exact design,
// the same Siegmund fallback): what a line redesigns once its autocorrelation is
// known, without the drift EWMA's λ search, which does not depend on the shift.
struct ShiftCusumDesign {
  double k = 0.5;
  double h = 5.0;
};
ShiftCusumDesign DesignShiftCusum(double false_alarms_per_day, double packs_per_minute,
                                  double min_shift_sigma);

}  // namespace heft
