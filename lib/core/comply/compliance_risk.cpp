// compliance_risk.cpp — the plug-in normal model of compliance_risk.h.
#include "core/comply/compliance_risk.h"

#include <algorithm>
#include <cmath>

#include <boost/math/distributions/binomial.hpp>

namespace heft::comply {

double NormalFractionBelow(double limit, double mean, double sigma) {
  if (sigma <= 0.0) return mean < limit ? 1.0 : 0.0;
  // erfc form keeps precision far in the lower tail.
  return 0.5 * std::erfc(-(limit - mean) / (sigma * std::sqrt(2.0)));
}

RiskInput RiskInputFromLot(const LotFigures& figures, std::int64_t expected_lot_packs) {
  RiskInput input;
  input.packs = figures.count;
  input.mean_g = figures.mean_g;
  input.sigma_g = std::max(figures.s_g, figures.short_term_sigma_g);
  input.t1_so_far = figures.t1_count;
  input.t2_so_far = figures.t2_count;
  input.expected_lot_packs = expected_lot_packs;
  return input;
}

namespace {
constexpr double kExactTailFloor = 1e-12;

// P(Binomial(trials, p) > threshold).
double BinomialUpperTail(std::int64_t trials, double p, std::int64_t threshold) {
  if (threshold < 0) return 1.0;
  if (threshold >= trials) return 0.0;
  if (p <= 0.0) return 0.0;
  if (p >= 1.0) return 1.0;
  // Chernoff bound P(X >= a) <= exp(-n·D(a/n || p)) for a/n > p (D: the Kullback–Leibler
  // divergence of two Bernoulli laws). It runs on every assessment and is mostly far
  // below any alarm probability, so a bound under 1e-12 is returned as it is instead of
  // the exact but costly incomplete-beta tail: it only ever overstates the risk.
  const double n = static_cast<double>(trials);
  const double q = static_cast<double>(threshold + 1) / n;
  if (q > p) {
    // At q = 1 the (1 − q) terms vanish (0·log 0 = 0).
    const double divergence =
        q * std::log(q / p) + (q < 1.0 ? (1.0 - q) * (std::log1p(-q) - std::log1p(-p)) : 0.0);
    const double bound = std::exp(-n * divergence);
    if (bound < kExactTailFloor) return bound;
  }
  boost::math::binomial_distribution<double> dist(static_cast<double>(trials), p);
  return boost::math::cdf(boost::math::complement(dist, static_cast<double>(threshold)));
}
}  // namespace

Status EstimateRisk(const NetContentLimits& limits, std::optional<double> t1_share_limit,
                    const RiskInput& input, ComplianceRisk* out) {
  if (input.packs < 2) return Status::Error("compliance risk: needs at least 2 packs");
  if (!std::isfinite(input.mean_g)) return Status::Error("compliance risk: mean is not finite");
  if (!std::isfinite(input.sigma_g) || input.sigma_g < 0.0) {
    return Status::Error("compliance risk: sigma is negative or not finite");
  }
  ComplianceRisk risk;
  const double m = input.mean_g;
  const double sigma = input.sigma_g;
  const std::int64_t n = input.packs;
  const std::int64_t total = std::max(input.expected_lot_packs, n);
  risk.remaining = total - n;

  if (input.current_level_g && !std::isfinite(*input.current_level_g)) {
    return Status::Error("compliance risk: current level is not finite");
  }
  // Level of the packs still to come.
  const double level = input.current_level_g.value_or(m);
  risk.p_pack_below_nominal = NormalFractionBelow(limits.nominal_g, level, sigma);
  risk.p_pack_below_t1 = NormalFractionBelow(limits.t1_g, level, sigma);
  if (limits.t2_g) risk.p_pack_below_t2 = NormalFractionBelow(*limits.t2_g, level, sigma);

  const double n_d = static_cast<double>(n);
  const double r_d = static_cast<double>(risk.remaining);
  const double total_d = static_cast<double>(total);
  if (risk.remaining == 0) {
    risk.p_lot_mean_below_nominal = m < limits.nominal_g ? 1.0 : 0.0;
  } else if (input.current_level_g) {
    // Final mean ~ N((n·x̄ + R·ℓ)/N, σ²·R/N² + (R/N)²·σ²/m): the packs still to come
    // scatter about ℓ, and ℓ itself, a mean of m packs, is off by about σ/√m. Without
    // that second term a level a hair either side of the nominal swings the
    // probability from near 0 to near 1 and the finding chatters.
    const double centre = (n_d * m + r_d * level) / total_d;
    double variance = sigma * sigma * r_d / (total_d * total_d);
    if (input.current_level_packs > 0) {
      const double share = r_d / total_d;
      variance += share * share * sigma * sigma / static_cast<double>(input.current_level_packs);
    }
    const double sd = std::sqrt(variance);
    risk.p_lot_mean_below_nominal = NormalFractionBelow(limits.nominal_g, centre, sd);
  } else {
    // Final mean ~ N(x̄, σ²·R/(n·N)).
    const double sd = sigma * std::sqrt(r_d / (n_d * total_d));
    risk.p_lot_mean_below_nominal = NormalFractionBelow(limits.nominal_g, m, sd);
  }

  if (t1_share_limit) {
    const auto allowed =
        static_cast<std::int64_t>(std::floor(*t1_share_limit * static_cast<double>(total) + 1e-9));
    risk.p_t1_share_exceeds =
        BinomialUpperTail(risk.remaining, risk.p_pack_below_t1, allowed - input.t1_so_far);
  }

  if (risk.p_pack_below_t2) {
    if (input.t2_so_far > 0) {
      risk.p_any_t2 = 1.0;
    } else {
      const double p2 = *risk.p_pack_below_t2;
      risk.p_any_t2 = p2 >= 1.0
                          ? (risk.remaining > 0 ? 1.0 : 0.0)
                          : -std::expm1(static_cast<double>(risk.remaining) * std::log1p(-p2));
    }
  }
  *out = risk;
  return Status::Ok();
}

}  // namespace heft::comply
