// Tests of the lowest safe target fill and the giveaway saving.
#include <catch2/catch.hpp>

#include <cmath>
#include <string>
#include <vector>

#include "core/comply/compliance_risk.h"
#include "core/comply/net_content_limits.h"
#include "core/comply/safe_target.h"
#include "io/rule_table_loader.h"

namespace {

using namespace heft::comply;

const RuleTable& Table(const std::string& name) {
  static std::vector<std::pair<std::string, RuleTable>> cache;
  for (const auto& [n, t] : cache) {
    if (n == name) return t;
  }
  RuleTable t;
  std::vector<std::string> errors;
  REQUIRE(
      heft::LoadRuleTableFile(std::string(HEFT_SOURCE_DIR) + "/config/rules/" + name, &t, &errors)
          .ok());
  cache.emplace_back(name, t);
  return cache.back().second;
}

NetContentLimits Limits500() {
  NetContentLimits l;
  REQUIRE(ComputeLimits(Table("eu-average-quantity.yaml"), 500.0, false, &l).ok());
  return l;
}

SafeTarget Compute(double sigma, double mean = 503.0, SafeTargetSettings settings = {}) {
  SafeTargetInput in;
  in.sigma_g = sigma;
  in.current_mean_g = mean;
  in.packs_per_hour = 7200;
  in.cost_per_kg = 2.40;
  SafeTarget t;
  REQUIRE(ComputeSafeTarget(Table("eu-average-quantity.yaml"), Limits500(), in, settings, &t).ok());
  return t;
}

}  // namespace

TEST_CASE("safe target: values per rule (z from scipy.stats.norm.isf)", "[comply]") {
  // scipy.stats.norm.isf(0.0125) = 2.241402727604945 (T1 share aimed at 2.5 %/2),
  // norm.isf(1e-4) = 3.7190164854556804 (T2), norm.isf(0.01) = 2.3263478740408408 (mean).
  // σ = 3: mean 500 + 2.32635·3/60 = 500.11632; T1 485 + 2.24140·3 = 491.72421;
  // T2 470 + 3.71902·3 = 481.15705 → the mean rule binds.
  SafeTarget t = Compute(3.0);
  CHECK(t.for_mean_g == Approx(500.0 + 2.3263478740408408 * 3.0 / 60.0).epsilon(1e-12));
  CHECK(t.for_t1_share_g == Approx(485.0 + 2.241402727604945 * 3.0).epsilon(1e-12));
  CHECK(t.for_t2_g == Approx(470.0 + 3.7190164854556804 * 3.0).epsilon(1e-12));
  CHECK(t.binding_rule == "mean");
  CHECK(t.target_g == t.for_mean_g);
  // Giveaway: now 3 g/pack, at target 0.11632; saving 2.88368 g × 7200/h.
  CHECK(t.giveaway_now_g == Approx(3.0));
  CHECK(t.saving_per_pack_g == Approx(503.0 - t.target_g));
  CHECK(t.saving_per_hour_g == Approx(t.saving_per_pack_g * 7200));
  CHECK(t.saving_per_year_kg == Approx(t.saving_per_hour_g * 2000 / 1000));
  CHECK(t.saving_per_year_money == Approx(t.saving_per_year_kg * 2.40));
  CHECK_FALSE(t.raise_needed);
  // σ = 8: T1 485 + 2.24140·8 = 502.93122 binds.
  t = Compute(8.0);
  CHECK(t.binding_rule == "t1_share");
  CHECK(t.target_g == Approx(485.0 + 2.241402727604945 * 8.0).epsilon(1e-12));
  CHECK_FALSE(t.raise_needed);  // 503.0 is above 502.93
  CHECK(Compute(8.0, 502.0).raise_needed);
}

TEST_CASE("safe target: monotone in sigma and meets its own constraints", "[comply]") {
  // Check with the normal CDF (NormalFractionBelow, itself checked against scipy).
  const NetContentLimits l = Limits500();
  SafeTargetSettings s;
  double previous = -1e9;
  for (double sigma = 0.0; sigma <= 20.0; sigma += 0.25) {
    const SafeTarget t = Compute(sigma, 503.0, s);
    INFO("sigma " << sigma);
    CHECK(t.target_g >= previous);
    previous = t.target_g;
    // T1 share ≤ half the 2.5 % limit, T2 ≤ 1e-4, lot mean ≥ Qn with 99 % over 3600 packs.
    CHECK(NormalFractionBelow(l.t1_g, t.target_g, sigma) <= 0.0125 * (1 + 1e-9));
    CHECK(NormalFractionBelow(*l.t2_g, t.target_g, sigma) <= 1e-4 * (1 + 1e-9));
    CHECK(NormalFractionBelow(l.nominal_g, t.target_g, sigma / 60.0) <= 0.01 * (1 + 1e-9));
    CHECK(t.target_g >= l.nominal_g);
    // And it is the lowest such: 0.01 g lower breaks the binding constraint.
    if (sigma > 0) {
      const double lower = t.target_g - 0.01;
      const bool breaks = NormalFractionBelow(l.t1_g, lower, sigma) > 0.0125 ||
                          NormalFractionBelow(*l.t2_g, lower, sigma) > 1e-4 ||
                          NormalFractionBelow(l.nominal_g, lower, sigma / 60.0) > 0.01;
      CHECK(breaks);
    }
  }
}

TEST_CASE("safe target: settings, advice text and errors", "[comply]") {
  SafeTargetSettings s;
  s.tail_probability = 1e-6;  // stricter T2 target
  const SafeTarget strict = Compute(6.0, 503.0, s);
  CHECK(strict.for_t2_g > Compute(6.0).for_t2_g);
  s = {};
  s.mean_margin_g = 0.5;
  CHECK(Compute(1.0, 503.0, s).for_mean_g == Approx(Compute(1.0).for_mean_g + 0.5));

  SafeTargetInput in{3.0, 503.0, 7200, 2.40};
  SafeTarget t = Compute(3.0);
  const std::string text = DescribeSafeTarget(t, in, {});
  CHECK(text.find("500.1 g") != std::string::npos);
  CHECK(text.find("never adjusts the filler") != std::string::npos);
  in.current_mean_g = 499.0;
  t = Compute(3.0, 499.0);
  CHECK(t.raise_needed);
  CHECK(DescribeSafeTarget(t, in, {}).find("raise the fill") != std::string::npos);

  SafeTarget out;
  in.sigma_g = -1;
  CHECK_FALSE(ComputeSafeTarget(Table("eu-average-quantity.yaml"), Limits500(), in, {}, &out).ok());
  in.sigma_g = 3;
  s = {};
  s.mean_confidence = 1.0;
  CHECK_FALSE(ComputeSafeTarget(Table("eu-average-quantity.yaml"), Limits500(), in, s, &out).ok());
}

TEST_CASE("safe target under the US table uses only confirmed rules by default", "[comply]") {
  const RuleTable& us = Table("us-hb133.yaml");
  NetContentLimits l;
  REQUIRE(ComputeLimits(us, 340.0, true, &l).ok());  // MAV row only for the arithmetic
  SafeTargetInput in{4.0, 345.0, 3600, 0.0};
  SafeTarget t;
  REQUIRE(ComputeSafeTarget(us, l, in, {}, &t).ok());
  CHECK(t.binding_rule == "average");
  CHECK(std::isnan(t.for_no_t1_g));
  SafeTargetSettings opt_in;
  opt_in.allow_unconfirmed = true;
  REQUIRE(ComputeSafeTarget(us, l, in, opt_in, &t).ok());
  CHECK(t.binding_rule == "average");  // MAV: 323.8 + 3.719·4 = 338.68 < 340.155
  in.sigma_g = 6.0;                    // MAV: 323.8 + 3.719·6 = 346.11 > 340.23
  REQUIRE(ComputeSafeTarget(us, l, in, opt_in, &t).ok());
  CHECK(t.binding_rule == "mav");
  CHECK(t.target_g == Approx(323.8 + 3.7190164854556804 * 6.0).epsilon(1e-12));
}
