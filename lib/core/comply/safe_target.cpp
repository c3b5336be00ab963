// safe_target.cpp — lowest safe target fill and giveaway saving.
#include "core/comply/safe_target.h"

#include <cmath>
#include <cstdio>
#include <limits>

#include <boost/math/distributions/normal.hpp>

namespace heft::comply {

namespace {
// Upper-tail z: Φ⁻¹(1 − p).
double UpperZ(double p) {
  boost::math::normal standard;
  return boost::math::quantile(boost::math::complement(standard, p));
}
bool InOpenUnit(double p) { return p > 0.0 && p < 1.0; }
}  // namespace

Status ComputeSafeTarget(const RuleTable& table, const NetContentLimits& limits,
                         const SafeTargetInput& input, const SafeTargetSettings& settings,
                         SafeTarget* out) {
  if (!std::isfinite(input.sigma_g) || input.sigma_g < 0.0) {
    return Status::Error("safe target: sigma is negative or not finite");
  }
  if (!std::isfinite(input.current_mean_g)) {
    return Status::Error("safe target: current mean is not finite");
  }
  if (!std::isfinite(input.packs_per_hour) || input.packs_per_hour < 0.0 ||
      !std::isfinite(input.cost_per_kg) || input.cost_per_kg < 0.0) {
    return Status::Error("safe target: pack rate and cost must be finite and not negative");
  }
  if (!InOpenUnit(settings.tail_probability) || !InOpenUnit(settings.mean_confidence) ||
      !(settings.t1_share_of_limit > 0.0 && settings.t1_share_of_limit <= 1.0)) {
    return Status::Error(
        "safe target: tail_probability and mean_confidence must be in (0, 1), "
        "t1_share_of_limit in (0, 1]");
  }
  if (settings.lot_packs < 1) return Status::Error("safe target: lot_packs must be ≥ 1");
  if (!std::isfinite(settings.hours_per_year) || settings.hours_per_year < 0.0) {
    return Status::Error("safe target: hours_per_year must be finite and not negative");
  }

  const double nan = std::numeric_limits<double>::quiet_NaN();
  const double sigma = input.sigma_g;
  SafeTarget t;
  t.for_mean_g = t.for_t1_share_g = t.for_t2_g = t.for_no_t1_g = nan;
  t.target_g = -std::numeric_limits<double>::infinity();
  auto consider = [&](double value, const PackerRule& rule) {
    if (value > t.target_g) {
      t.target_g = value;
      t.binding_rule = rule.id;
    }
  };

  for (const PackerRule& rule : table.rules) {
    if (!rule.provenance.confirmed && !settings.allow_unconfirmed) continue;
    switch (rule.kind) {
      case PackerRuleKind::kMeanNotBelowNominal:
        t.for_mean_g = limits.nominal_g + settings.mean_margin_g +
                       UpperZ(1.0 - settings.mean_confidence) * sigma /
                           std::sqrt(static_cast<double>(settings.lot_packs));
        consider(t.for_mean_g, rule);
        break;
      case PackerRuleKind::kT1FractionAtMost:
        t.t1_share_aimed = settings.t1_share_of_limit * rule.limit_fraction;
        if (!InOpenUnit(t.t1_share_aimed)) break;
        t.for_t1_share_g = limits.t1_g + UpperZ(t.t1_share_aimed) * sigma;
        consider(t.for_t1_share_g, rule);
        break;
      case PackerRuleKind::kNoPackBelowT2:
        if (!limits.t2_g) break;
        t.for_t2_g = *limits.t2_g + UpperZ(settings.tail_probability) * sigma;
        consider(t.for_t2_g, rule);
        break;
      case PackerRuleKind::kNoPackBelowT1:
        t.for_no_t1_g = limits.t1_g + UpperZ(settings.tail_probability) * sigma;
        consider(t.for_no_t1_g, rule);
        break;
    }
  }
  if (!std::isfinite(t.target_g)) {
    return Status::Error("safe target: the table " + table.id + " has no usable packer's rule");
  }

  t.giveaway_now_g = input.current_mean_g - limits.nominal_g;
  t.giveaway_at_target_g = t.target_g - limits.nominal_g;
  t.saving_per_pack_g = input.current_mean_g - t.target_g;
  t.raise_needed = t.saving_per_pack_g < 0.0;
  t.saving_per_hour_g = t.saving_per_pack_g * input.packs_per_hour;
  t.saving_per_year_kg = t.saving_per_hour_g * settings.hours_per_year / 1000.0;
  t.saving_per_hour_money = t.saving_per_hour_g / 1000.0 * input.cost_per_kg;
  t.saving_per_year_money = t.saving_per_year_kg * input.cost_per_kg;
  *out = t;
  return Status::Ok();
}

std::string DescribeSafeTarget(const SafeTarget& target, const SafeTargetInput& input,
                               const SafeTargetSettings& settings) {
  char buf[900];
  std::snprintf(buf, sizeof buf,
                "With a pack spread of %.2f g, the lowest fill that meets every rule is %.1f g "
                "(set by the '%.*s' rule",
                input.sigma_g, target.target_g, static_cast<int>(target.binding_rule.size()),
                target.binding_rule.data());
  std::string text = buf;
  if (std::isfinite(target.for_t1_share_g)) {
    std::snprintf(buf, sizeof buf, "; T1 share aimed at %.2f %%", 100.0 * target.t1_share_aimed);
    text += buf;
  }
  if (std::isfinite(target.for_t2_g) || std::isfinite(target.for_no_t1_g)) {
    std::snprintf(buf, sizeof buf, "; a pack below the %s limit at most 1 in %.0f",
                  std::isfinite(target.for_t2_g) ? "T2" : "T1", 1.0 / settings.tail_probability);
    text += buf;
  }
  std::snprintf(buf, sizeof buf, "; lot mean at or above nominal with %.0f %% confidence). ",
                100.0 * settings.mean_confidence);
  text += buf;
  if (target.raise_needed) {
    std::snprintf(buf, sizeof buf,
                  "The line runs at %.1f g, %.1f g below that: raise the fill to stay compliant. ",
                  input.current_mean_g, -target.saving_per_pack_g);
    text += buf;
  } else {
    std::snprintf(buf, sizeof buf,
                  "The line runs at %.1f g, giving away %.2f g per pack; at %.1f g it would give "
                  "away %.2f g. The difference is %.1f kg per hour and %.1f kg per year "
                  "(%.0f packs per hour, %.0f running hours a year)",
                  input.current_mean_g, target.giveaway_now_g, target.target_g,
                  target.giveaway_at_target_g, target.saving_per_hour_g / 1000.0,
                  target.saving_per_year_kg, input.packs_per_hour, settings.hours_per_year);
    text += buf;
    if (input.cost_per_kg > 0.0) {
      std::snprintf(buf, sizeof buf, ", worth %.2f per hour and %.0f per year at %.2f per kg",
                    target.saving_per_hour_money, target.saving_per_year_money, input.cost_per_kg);
      text += buf;
    }
    text += ". ";
  }
  text +=
      "Advice only: heft never adjusts the filler, and these figures are the packer's own "
      "control, not a legal check.";
  return text;
}

}  // namespace heft::comply
