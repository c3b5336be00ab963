// detector_design.h — choose detector thresholds from a false-alarm budget in time.
//
// A checkweigher reports every pack, so a rule with an in-control ARL of 370
// would alarm every few minutes. The engineer states false alarms per day and
// the pack rate; we turn that into an in-control ARL in packs, share it out
// among the detectors, and solve each detector's threshold for its share.
// Pure functions.
#pragma once

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

struct DetectorDesign {
  double arl0_packs = 0;          // in-control ARL for the whole line, packs
  double cusum_k = 0.5;
  double cusum_h = 5.0;
  double cusum_arl0 = 0;          // two-sided, packs (Siegmund)
  double cusum_delay_packs = 0;   // ARL at the smallest shift worth catching (Siegmund)
  double individuals_limit = 3.0; // L in σ
};

// Shares the line's budget: the CUSUM gets 1/2 of the false alarms, the
// individuals check 1/4 (the rest is reserved for the other detectors).
DetectorDesign DesignDetectors(double false_alarms_per_day, double packs_per_minute,
                               double min_shift_sigma);

}  // namespace heft
