// Tests of live compliance risk (plug-in normal model) and of the compliance
// warning/alarm levels. Reference values: scipy.stats.norm / scipy.stats.binom
// (Debian python3-scipy 1.10.1, /usr/bin/python3), pasted with the call used.
#include <catch2/catch.hpp>

#include <cmath>
#include <string>
#include <vector>

#include "core/comply/compliance_alert.h"
#include "core/comply/compliance_risk.h"
#include "core/comply/lot_accumulator.h"
#include "core/comply/net_content_limits.h"
#include "io/rule_table_loader.h"

namespace {

using namespace heft::comply;

const RuleTable& EuTable() {
  static const RuleTable table = [] {
    RuleTable t;
    std::vector<std::string> errors;
    REQUIRE(
        heft::LoadRuleTableFile(
            std::string(HEFT_SOURCE_DIR) + "/config/rules/eu-average-quantity.yaml", &t, &errors)
            .ok());
    return t;
  }();
  return table;
}

NetContentLimits Limits500() {
  NetContentLimits l;
  REQUIRE(ComputeLimits(EuTable(), 500.0, false, &l).ok());
  return l;
}

}  // namespace

TEST_CASE("fraction below a limit vs scipy.stats.norm", "[comply]") {
  // scipy.stats.norm.cdf(limit, mean, sigma)
  CHECK(NormalFractionBelow(485, 492, 3.5) == Approx(0.022750131948179195).epsilon(1e-12));
  CHECK(NormalFractionBelow(470, 492, 3.5) == Approx(1.6317483268109278e-10).epsilon(1e-9));
  CHECK(NormalFractionBelow(500, 501.2, 4) == Approx(0.38208857781104844).epsilon(1e-12));
  CHECK(NormalFractionBelow(440.3, 449.0, 4.1) == Approx(0.016920917304087953).epsilon(1e-12));
  CHECK(NormalFractionBelow(500, 500, 2) == Approx(0.5));
  // σ = 0: step function.
  CHECK(NormalFractionBelow(485, 484.9, 0) == 1.0);
  CHECK(NormalFractionBelow(485, 485.0, 0) == 0.0);
}

TEST_CASE("live risk: lot mean, T1 share and T2 vs scipy", "[comply]") {
  const NetContentLimits l = Limits500();
  // Lot of 3600 expected packs, 400 seen at mean 500.3, σ 3: final mean ~
  // N(500.3, 3²·3200/(400·3600)) → sd 0.1414214.
  // scipy.stats.norm.cdf(500, 500.3, 3*sqrt(3200/(400*3600))) = 0.01694742676234126
  RiskInput in;
  in.packs = 400;
  in.mean_g = 500.3;
  in.sigma_g = 3.0;
  in.expected_lot_packs = 3600;
  ComplianceRisk r;
  REQUIRE(EstimateRisk(l, 0.025, in, &r).ok());
  CHECK(r.remaining == 3200);
  CHECK(r.p_lot_mean_below_nominal == Approx(0.01694742676234126).epsilon(1e-9));

  // 600 seen at mean 492, σ 3.5, 10 T1 so far; allowed floor(0.025·3600) = 90 → the
  // remaining 3000 may add at most 80. p1 = norm.cdf(485, 492, 3.5).
  // scipy.stats.binom.sf(80, 3000, p1) = 0.06969960797741885
  // -numpy.expm1(3000 * numpy.log1p(-norm.cdf(470, 492, 3.5))) = 4.895243782661198e-07
  // (the plain 1 - (1 - p)**3000 in double loses 6 digits: 4.89524301205968e-07)
  in.packs = 600;
  in.mean_g = 492.0;
  in.sigma_g = 3.5;
  in.t1_so_far = 10;
  REQUIRE(EstimateRisk(l, 0.025, in, &r).ok());
  CHECK(r.p_pack_below_t1 == Approx(0.022750131948179195).epsilon(1e-12));
  REQUIRE(r.p_t1_share_exceeds.has_value());
  CHECK(*r.p_t1_share_exceeds == Approx(0.06969960797741885).epsilon(1e-7));
  REQUIRE(r.p_any_t2.has_value());
  CHECK(*r.p_any_t2 == Approx(4.895243782661198e-07).epsilon(1e-9));
  CHECK(r.p_lot_mean_below_nominal == Approx(1.0));  // mean 8 g under nominal

  // A far tail is given as its Chernoff bound exp(−n·D(q‖p)) once that is under 1e-12:
  // never below the exact tail, never near an alarm probability. Same lot at mean 493 g
  // and 493.5 g (scipy 1.10, Debian 12):
  //   binom.sf(80, 3000, norm.cdf(485, 493.0, 3.5)) = 1.6528411900585172e-12 (bound 2.2e-11:
  //   above the floor, so the exact tail is kept)
  //   binom.sf(80, 3000, norm.cdf(485, 493.5, 3.5)) = 1.4195107079311315e-21 (bound 2.306e-20)
  in.mean_g = 493.0;
  REQUIRE(EstimateRisk(l, 0.025, in, &r).ok());
  CHECK(*r.p_t1_share_exceeds == Approx(1.6528411900585172e-12).epsilon(1e-6));
  in.mean_g = 493.5;
  REQUIRE(EstimateRisk(l, 0.025, in, &r).ok());
  CHECK(*r.p_t1_share_exceeds >= 1.4195107079311315e-21);
  CHECK(*r.p_t1_share_exceeds == Approx(2.3063331302094474e-20).epsilon(1e-6));
  in.mean_g = 492.0;

  // Already more T1 than the whole lot may hold → certain; one T2 seen → certain.
  in.t1_so_far = 91;
  in.t2_so_far = 1;
  REQUIRE(EstimateRisk(l, 0.025, in, &r).ok());
  CHECK(*r.p_t1_share_exceeds == 1.0);
  CHECK(*r.p_any_t2 == 1.0);

  // Lot complete (expected ≤ seen): the final mean is known.
  in.expected_lot_packs = 0;
  in.mean_g = 500.01;
  REQUIRE(EstimateRisk(l, 0.025, in, &r).ok());
  CHECK(r.remaining == 0);
  CHECK(r.p_lot_mean_below_nominal == 0.0);

  // Bad inputs are errors.
  in.packs = 1;
  CHECK_FALSE(EstimateRisk(l, 0.025, in, &r).ok());
  in.packs = 10;
  in.sigma_g = -1;
  CHECK_FALSE(EstimateRisk(l, 0.025, in, &r).ok());
  in.sigma_g = std::nan("");
  CHECK_FALSE(EstimateRisk(l, 0.025, in, &r).ok());
}

TEST_CASE("live risk agrees with a simulation of the same model", "[comply]") {
  // Independent check of the predictive formula N(x̄, σ²R/(nN)) for the final lot mean:
  // average over 20 000 simulated lots (normal via Box–Muller, fixed LCG seed) of the
  // event "final mean < Qn" where μ is drawn from its flat-prior posterior N(x̄, σ²/n).
  const NetContentLimits l = Limits500();
  RiskInput in;
  in.packs = 50;
  in.mean_g = 500.4;
  in.sigma_g = 3.0;
  in.expected_lot_packs = 150;
  ComplianceRisk r;
  REQUIRE(EstimateRisk(l, 0.025, in, &r).ok());
  std::uint64_t state = 12345;
  auto uniform = [&] {
    state = state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (static_cast<double>(state >> 11) + 0.5) / 9007199254740992.0;
  };
  auto normal = [&] {
    return std::sqrt(-2 * std::log(uniform())) * std::cos(2 * M_PI * uniform());
  };
  int below = 0;
  const int runs = 20000;
  for (int i = 0; i < runs; ++i) {
    const double mu = in.mean_g + in.sigma_g / std::sqrt(50.0) * normal();
    double sum = in.mean_g * 50;
    for (int j = 0; j < 100; ++j) sum += mu + in.sigma_g * normal();
    below += sum / 150.0 < 500.0 ? 1 : 0;
  }
  const double simulated = static_cast<double>(below) / runs;
  // Binomial SE at p ≈ 0.17 over 20 000 runs ≈ 0.0027; allow 4 SE.
  CHECK(std::fabs(simulated - r.p_lot_mean_below_nominal) < 0.011);
}

TEST_CASE("compliance warning and alarm levels", "[comply]") {
  LotFigures f;
  ComplianceRisk r;
  ComplianceAlertSettings s;
  f.count = 100;
  // Quiet lot.
  ComplianceAlert a = AssessCompliance(f, r, 0.025, s);
  CHECK_FALSE(a.level.has_value());
  // Any T2 → alarm at once, even on the first packs.
  f.count = 3;
  f.t2_count = 1;
  a = AssessCompliance(f, r, 0.025, s);
  REQUIRE(a.level.has_value());
  CHECK(*a.level == heft::Severity::kAlarm);
  CHECK(a.reasons.front().reason == ComplianceReason::kT2Seen);
  // Mean nearing nominal: warning at P ≥ 5 %, alarm at P ≥ 50 %; not before 30 packs.
  f.t2_count = 0;
  r.p_lot_mean_below_nominal = 0.2;
  CHECK_FALSE(AssessCompliance(f, r, 0.025, s).level.has_value());
  f.count = 30;
  a = AssessCompliance(f, r, 0.025, s);
  CHECK(*a.level == heft::Severity::kWarning);
  CHECK(a.reasons.front().reason == ComplianceReason::kMeanNearNominal);
  r.p_lot_mean_below_nominal = 0.6;
  a = AssessCompliance(f, r, 0.025, s);
  CHECK(*a.level == heft::Severity::kAlarm);
  CHECK(a.reasons.front().reason == ComplianceReason::kMeanBelowNominal);
  // T1 share: warning when likely (P ≥ 5 %) or when the observed share has reached the
  // limit after 200 packs; alarm when P ≥ 50 %.
  r.p_lot_mean_below_nominal = 0.0;
  r.p_t1_share_exceeds = 0.1;
  a = AssessCompliance(f, r, 0.025, s);
  CHECK(*a.level == heft::Severity::kWarning);
  CHECK(a.reasons.front().reason == ComplianceReason::kT1ShareNearLimit);
  r.p_t1_share_exceeds = 0.0;
  f.count = 200;
  f.t1_count = 4;
  f.t1_fraction = 0.02;
  CHECK_FALSE(AssessCompliance(f, r, 0.025, s).level.has_value());
  f.t1_count = 5;
  f.t1_fraction = 0.025;
  a = AssessCompliance(f, r, 0.025, s);
  CHECK(*a.level == heft::Severity::kWarning);
  r.p_t1_share_exceeds = 0.7;
  a = AssessCompliance(f, r, 0.025, s);
  CHECK(*a.level == heft::Severity::kAlarm);
  CHECK(a.reasons.front().reason == ComplianceReason::kT1ShareOverLimit);
  // No T1-share rule in the table (e.g. us-hb133): no T1 reasons at all.
  CHECK_FALSE(AssessCompliance(f, r, std::nullopt, s).level.has_value());
  // Several reasons: most severe first.
  f.t2_count = 1;
  r.p_t1_share_exceeds = 0.1;
  a = AssessCompliance(f, r, 0.025, s);
  REQUIRE(a.reasons.size() == 2);
  CHECK(a.reasons[0].severity == heft::Severity::kAlarm);
  CHECK(a.reasons[1].severity == heft::Severity::kWarning);
}

TEST_CASE("lowering the target until the T1-share alarm fires (pure pieces together)", "[comply]") {
  // Invented run on oats-1 (500 g, TNE 15, T1 485): σ = 8 g, lot of 3600 packs, the set
  // point lowered by 1 g every 300 packs from 506 g to 495 g. Expected T1 packs over the
  // lot: 300·Σ Φ((485 − t)/8) for t = 506…495 ≈ 135 > floor(2.5 % · 3600) = 90, so the lot
  // fails the T1-share rule; it would pass had the set point stayed at 503 g or above
  // (Φ(−18/8) = 1.2 %). The current level passed to the risk model is the mean of the
  // last 100 packs, as the line monitor's rolling mean would give. Fixed-seed normals.
  const NetContentLimits l = Limits500();
  LotAccumulator lot(l, {});
  std::uint64_t state = 2024;
  auto uniform = [&] {
    state = state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (static_cast<double>(state >> 11) + 0.5) / 9007199254740992.0;
  };
  auto normal = [&] {
    return std::sqrt(-2 * std::log(uniform())) * std::cos(2 * M_PI * uniform());
  };
  std::vector<double> recent;
  double first_warning_target = 0, first_alarm_target = 0;
  bool t1_alarm = false;
  for (int i = 0; i < 3600; ++i) {
    const double target = 506.0 - static_cast<double>(i / 300);
    const double x = target + 8.0 * normal();
    lot.Add(x, PackRole::kInLot, i, i);
    recent.push_back(x);
    if (recent.size() > 100) recent.erase(recent.begin());
    if (lot.count() < 100) continue;
    RiskInput in = RiskInputFromLot(lot.Figures(), 3600);
    double sum = 0;
    for (double v : recent) sum += v;
    in.current_level_g = sum / static_cast<double>(recent.size());
    ComplianceRisk r;
    REQUIRE(EstimateRisk(l, 0.025, in, &r).ok());
    const ComplianceAlert a = AssessCompliance(lot.Figures(), r, 0.025, {});
    if (!a.level) continue;
    if (first_warning_target == 0) first_warning_target = target;
    if (*a.level == heft::Severity::kAlarm && first_alarm_target == 0) first_alarm_target = target;
    for (const auto& item : a.reasons) {
      t1_alarm = t1_alarm || item.reason == ComplianceReason::kT1ShareOverLimit;
    }
  }
  INFO("first warning at set point " << first_warning_target << ", first alarm at "
                                     << first_alarm_target << "; T1 packs "
                                     << lot.Figures().t1_count);
  CHECK(lot.Figures().t1_count > 90);  // the scenario really fails the rule
  CHECK(first_warning_target > 0);
  CHECK(first_warning_target < 503.0);
  CHECK(first_alarm_target > 0);
  CHECK(first_warning_target >= first_alarm_target);
  CHECK(t1_alarm);
}

TEST_CASE("compliance risk: the current level's own error widens the projection", "[comply]") {
  // 400 packs at 501 g, σ 4 g, lot of 3600, the last 60 packs average 499.8 g. Final mean
  // centre (400·501 + 3200·499.8)/3600. scipy 1.10 (Debian 12):
  //   norm.cdf(500, c, 4·√3200/3600)                                = 0.8555778168267438
  //   norm.cdf(500, c, √(16·3200/3600² + (3200/3600)²·16/60))       = 0.5572079656151763
  // A level 0.2 g under the nominal, known from 60 packs, is no near-certainty.
  const NetContentLimits l = Limits500();
  RiskInput in;
  in.packs = 400;
  in.mean_g = 501.0;
  in.sigma_g = 4.0;
  in.expected_lot_packs = 3600;
  in.current_level_g = 499.8;
  ComplianceRisk r;
  REQUIRE(EstimateRisk(l, 0.025, in, &r).ok());
  CHECK(r.p_lot_mean_below_nominal == Approx(0.8555778168267438).epsilon(1e-9));
  in.current_level_packs = 60;
  REQUIRE(EstimateRisk(l, 0.025, in, &r).ok());
  CHECK(r.p_lot_mean_below_nominal == Approx(0.5572079656151763).epsilon(1e-9));
}
