// compliance_risk.h — live risk that the current lot fails the packer's rules,
// from its running figures.
//
// Method: plug-in normal model. Pack weights in the lot are taken as
// independent N(μ, σ²) with σ the lot's spread (estimated, treated as known)
// and μ estimated by the running mean.
//  * Per-pack fractions: Φ((L − x̄)/σ) for L = T1, T2, Qn.
//  * Final lot mean: normal predictive distribution with a flat prior on μ:
//    after n packs with mean x̄ and R still to come (N = n + R), the final mean
//    is N(x̄, σ²·R/(n·N)); P(final mean < Qn) follows. Assumes the process
//    stays where it is (no drift over the rest of the lot).
//  * When the caller knows the line's current level ℓ (e.g. the monitor's
//    rolling mean), the remaining packs are taken as N(ℓ, σ²) instead: per-pack
//    fractions use ℓ, and the final mean is N((n·x̄ + R·ℓ)/N, σ²·R/N²) with ℓ
//    treated as known. This reacts to a set-point change at once, where the
//    lot's running mean lags.
//  * T1 share: final T1 count = T1 so far + Binomial(R, p1) with p1 plug-in;
//    P(count > floor(limit·N)).
//  * T2: P(at least one T2 in the lot) = 1 − (1 − p2)^R, or 1 once one is seen.
// Pure; thread-safe.
#pragma once

#include <cstdint>
#include <optional>

#include "core/comply/lot_accumulator.h"
#include "core/comply/net_content_limits.h"
#include "core/model/status.h"

namespace heft::comply {

// Φ((limit − mean)/σ); for σ = 0 the step function (mean < limit).
double NormalFractionBelow(double limit, double mean, double sigma);

struct RiskInput {
  std::int64_t packs = 0;  // packs in the lot so far (n)
  double mean_g = 0.0;     // their mean
  double sigma_g = 0.0;    // pack spread used by the model
  std::int64_t t1_so_far = 0;
  std::int64_t t2_so_far = 0;
  std::int64_t expected_lot_packs = 0;    // N; for time lots the caller estimates it from the rate
  std::optional<double> current_level_g;  // the line's level now, if known (see above)
  // Packs current_level_g was averaged over; its error, σ²/m, is part of the projected
  // mean's spread. 0 takes the level as exact.
  std::int64_t current_level_packs = 0;
};

// Builds the input from a lot's figures. σ = max(s, short-term sigma): the
// lot's own SD includes head-to-head and within-lot drift spread, the moving
// range sigma guards against an s that is small by chance early in the lot.
RiskInput RiskInputFromLot(const LotFigures& figures, std::int64_t expected_lot_packs);

struct ComplianceRisk {
  std::int64_t remaining = 0;  // R = max(0, N − n)
  double p_pack_below_nominal = 0.0;
  double p_pack_below_t1 = 0.0;
  std::optional<double> p_pack_below_t2;  // if the table has T2
  double p_lot_mean_below_nominal = 0.0;
  std::optional<double> p_t1_share_exceeds;  // if a T1-share limit is given
  std::optional<double> p_any_t2;            // if the table has T2
};

// Fails on n < 2, a non-finite mean or a negative/non-finite σ.
Status EstimateRisk(const NetContentLimits& limits, std::optional<double> t1_share_limit,
                    const RiskInput& input, ComplianceRisk* out);

}  // namespace heft::comply
