// Tests of the reference test: Student-t mean-criterion factors, sampling-plan
// acceptance numbers, double-sampling decisions and the worked example of
// check-values.md §1.4.
#include <catch2/catch.hpp>

#include <cmath>
#include <string>
#include <vector>

#include "core/comply/mean_criterion.h"
#include "core/comply/net_content_limits.h"
#include "core/comply/reference_test.h"
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

const PlanSet& Set(const std::string& id) {
  for (const PlanSet& set : EuTable().plan_sets) {
    if (set.id == id) return set;
  }
  FAIL("no plan set " << id);
  throw 0;
}

const SamplingPlan& PlanFor(const std::string& set, std::int64_t lot) {
  auto plans = PlansForLot(Set(set), lot, false);
  REQUIRE(plans.size() == 1);
  return *plans.front();
}

NetContentLimits Limits500() {
  NetContentLimits l;
  REQUIRE(ComputeLimits(EuTable(), 500.0, false, &l).ok());
  return l;
}

// A sample of `n` packs at `good` grams with `bad` of them replaced by `low`.
std::vector<double> Sample(int n, int bad, double good = 501.0, double low = 480.0) {
  std::vector<double> s(static_cast<std::size_t>(n), good);
  for (int i = 0; i < bad; ++i) s[static_cast<std::size_t>(i)] = low;
  return s;
}

}  // namespace

TEST_CASE("mean-criterion factor k against the published factors", "[comply]") {
  // Published k: UK SI 2006/659 Sch 2 §4.5–4.6 (= 76/211/EEC Annex II §2.3.3) [S],
  // rounded to 3 decimals: |diff| < 5e-4 (check-values.md §1.4).
  CHECK(std::fabs(MeanCriterionFactor(20) - 0.640) < 5e-4);
  CHECK(std::fabs(MeanCriterionFactor(30) - 0.503) < 5e-4);
  CHECK(std::fabs(MeanCriterionFactor(50) - 0.379) < 5e-4);
  // OIML R 87 plan factors, from memory [M] (check-values.md §1.4): checked, but the
  // oracle is the [X] value below.
  CHECK(std::fabs(MeanCriterionFactor(80) - 0.295) < 5e-4);
  CHECK(std::fabs(MeanCriterionFactor(125) - 0.234) < 5e-4);
}

TEST_CASE("t(0.995, n-1) and k against the values computed with scipy (tag X)", "[comply]") {
  // check-values.md §1.4 [X] columns (scipy 1.10.1); more digits recomputed here with
  // /usr/bin/python3: scipy.stats.t.ppf(0.995, n-1)/sqrt(n). scipy's ppf is good to
  // about 1e-9 relative here (at n = 80 scipy.stats.t.sf of its own quantile is
  // 0.0050000000375; of Boost's it is 0.0049999999995), hence the 1e-8 tolerance.
  struct Row {
    int n;
    double t, k;
  };
  const Row rows[] = {
      {10, 3.2498, 1.0276882340060955},   {20, 2.8609, 0.6397244259203616},
      {30, 2.7564, 0.5032449122098347},   {32, 2.7440, 0.48508266224825647},
      {40, 2.7079, 0.4281586682956644},   {50, 2.6800, 0.3790024427618281},
      {80, 2.6395, 0.2951055883854825},   {125, 2.6161, 0.23398750924375616},
      {200, 2.6008, 0.18390151849959385},
  };
  for (const Row& row : rows) {
    INFO("n = " << row.n);
    CHECK(StudentTQuantile(0.995, row.n - 1) == Approx(row.t).margin(5e-5));
    CHECK(MeanCriterionFactor(row.n) == Approx(row.k).epsilon(1e-8));
  }
  // SCF-style factor t(0.975; n-1)/sqrt(n) (check-values.md §1.5 [X]; scipy).
  CHECK(MeanCriterionFactor(2, 0.975) == Approx(8.984643532275763).epsilon(1e-9));
  CHECK(MeanCriterionFactor(12, 0.975) == Approx(0.635369687328131).epsilon(1e-9));
  CHECK(std::isnan(MeanCriterionFactor(1)));
  CHECK(std::isnan(StudentTQuantile(1.0, 5)));
}

TEST_CASE("sampling plans of the shipped EU table match the published numbers", "[comply]") {
  // 76/211/EEC Annex II §2.2.1 double plans [S] (check-values.md §1.3).
  const SamplingPlan& a = PlanFor("eu-nondestructive-double", 100);
  CHECK(&a == &PlanFor("eu-nondestructive-double", 500));
  REQUIRE(a.stages.size() == 2);
  CHECK((a.stages[0].size == 30 && a.stages[0].accept == 1 && a.stages[0].reject == 3));
  CHECK((a.stages[1].size == 30 && a.stages[1].accept == 4 && a.stages[1].reject == 5));
  const SamplingPlan& b = PlanFor("eu-nondestructive-double", 501);
  CHECK(&b == &PlanFor("eu-nondestructive-double", 3200));
  CHECK((b.stages[0].size == 50 && b.stages[0].accept == 2 && b.stages[0].reject == 5));
  CHECK((b.stages[1].size == 50 && b.stages[1].accept == 6 && b.stages[1].reject == 7));
  const SamplingPlan& c = PlanFor("eu-nondestructive-double", 3201);
  CHECK(&c == &PlanFor("eu-nondestructive-double", 1'000'000));
  CHECK((c.stages[0].size == 80 && c.stages[0].accept == 3 && c.stages[0].reject == 7));
  CHECK((c.stages[1].size == 80 && c.stages[1].accept == 8 && c.stages[1].reject == 9));
  CHECK(PlansForLot(Set("eu-nondestructive-double"), 99, false).empty());
  // Mean test: n 30 for lots 100–500, 50 above (76/211 Annex II §2.3.3 [S]).
  CHECK(a.mean_test->n == 30);
  CHECK(c.mean_test->n == 50);

  // Destructive single plan n = 20, accept ≤ 1, reject ≥ 2 [S] Annex II §2.2.2.
  const SamplingPlan& d = PlanFor("eu-destructive-single", 100);
  CHECK((d.stages.size() == 1 && d.stages[0].size == 20 && d.stages[0].accept == 1 &&
         d.stages[0].reject == 2));

  // UK single plans 50/3, 80/5, 125/7 [S] UK SI 2006/659 Sch 2 §3.3–3.6.
  const SamplingPlan& u1 = PlanFor("uk-nondestructive-single", 500);
  const SamplingPlan& u2 = PlanFor("uk-nondestructive-single", 501);
  const SamplingPlan& u3 = PlanFor("uk-nondestructive-single", 3201);
  CHECK((u1.stages[0].size == 50 && u1.stages[0].accept == 3 && u1.stages[0].reject == 4));
  CHECK((u2.stages[0].size == 80 && u2.stages[0].accept == 5 && u2.stages[0].reject == 6));
  CHECK((u3.stages[0].size == 125 && u3.stages[0].accept == 7 && u3.stages[0].reject == 8));
  const SamplingPlan& small = PlanFor("uk-nondestructive-single", 99);
  CHECK(small.whole_lot);
  CHECK(small.whole_lot_max_defective_fraction == Approx(0.05));
}

TEST_CASE("double-sampling decisions", "[comply]") {
  // Rule of 76/211/EEC Annex II §2.2.1 [S] (check-values.md §1.3): first-sample count
  // ≤ Ac1 accept, ≥ Re1 reject, else take the second sample and judge the SUM.
  const SamplingPlan& p = PlanFor("eu-nondestructive-double", 300);  // 30: 1/3, 60: 4/5
  CHECK(DecideStage(p, 0, 0) == SamplingDecision::kAccept);
  CHECK(DecideStage(p, 0, 1) == SamplingDecision::kAccept);
  CHECK(DecideStage(p, 0, 2) == SamplingDecision::kNextStage);
  CHECK(DecideStage(p, 0, 3) == SamplingDecision::kReject);
  CHECK(DecideStage(p, 1, 4) == SamplingDecision::kAccept);
  CHECK(DecideStage(p, 1, 5) == SamplingDecision::kReject);

  const NetContentLimits l = Limits500();  // T1 = 485 g
  ReferenceTestResult r;
  // 2 defectives in the first 30 → second sample needed; with only 30 packs drawn the
  // result is incomplete.
  REQUIRE(RunReferenceTest(p, Sample(30, 2), l, &r).ok());
  CHECK_FALSE(r.complete);
  CHECK(r.count_decision == SamplingDecision::kNextStage);
  CHECK_FALSE(r.accepted);
  // Second sample with 2 more → cumulative 4 ≤ 4 → accept.
  std::vector<double> s = Sample(30, 2);
  std::vector<double> second = Sample(30, 2);
  s.insert(s.end(), second.begin(), second.end());
  REQUIRE(RunReferenceTest(p, s, l, &r).ok());
  CHECK(r.complete);
  CHECK(r.stages_used == 2);
  CHECK(r.defectives == 4);
  CHECK(r.count_decision == SamplingDecision::kAccept);
  // Second sample with 3 more → cumulative 5 → reject.
  s = Sample(30, 2);
  second = Sample(30, 3);
  s.insert(s.end(), second.begin(), second.end());
  REQUIRE(RunReferenceTest(p, s, l, &r).ok());
  CHECK(r.count_decision == SamplingDecision::kReject);
  CHECK_FALSE(r.accepted);
  // 3 in the first sample → reject at once; the second sample is not counted.
  s = Sample(60, 3);
  REQUIRE(RunReferenceTest(p, s, l, &r).ok());
  CHECK(r.stages_used == 1);
  CHECK(r.packs_counted == 30);
  CHECK(r.count_decision == SamplingDecision::kReject);
  // A pack exactly at T1 (485.0) is not defective: "short by more than the TNE".
  s = Sample(30, 3, 501.0, 485.0);
  REQUIRE(RunReferenceTest(p, s, l, &r).ok());
  CHECK(r.defectives == 0);
  // Too small a sample is an error, not a verdict.
  CHECK_FALSE(RunReferenceTest(p, Sample(29, 0), l, &r).ok());
  // Non-finite weight: error naming the pack.
  s = Sample(30, 0);
  s[7] = std::nan("");
  heft::Status st = RunReferenceTest(p, s, l, &r);
  CHECK_FALSE(st.ok());
  CHECK(st.message().find("pack 8") != std::string::npos);
}

TEST_CASE("worked example of check-values.md §1.4, number for number", "[comply]") {
  // check-values.md §1.4 worked example [X] (invented data): Qn 500 g, TNE 15 g,
  // destructive plan n = 20. x̄ = 500.19, s = 2.8020, limit with published k 0.640
  // = 498.2067, with exact t 498.2075; passes; 0 packs < 485 g, 0 < 470 g.
  const std::vector<double> w = {498.2, 503.1, 501.7, 496.4, 500.9, 499.3, 505.2,
                                 497.8, 502.6, 499.9, 494.9, 501.2, 503.8, 498.7,
                                 500.4, 496.9, 502.2, 499.1, 504.0, 497.5};
  MeanCheck published;
  REQUIRE(CheckMean(w, 500.0, 0.640, &published).ok());
  CHECK(published.mean == Approx(500.19).margin(5e-5));
  CHECK(published.s == Approx(2.8020).margin(5e-5));
  CHECK(published.limit == Approx(498.2067).margin(5e-5));
  CHECK(published.pass);

  const NetContentLimits l = Limits500();
  CHECK(l.tolerance_g == 15.0);
  ReferenceTestResult r;
  REQUIRE(RunReferenceTest(PlanFor("eu-destructive-single", 1000), w, l, &r).ok());
  REQUIRE(r.has_mean_check);
  CHECK(r.mean.k == Approx(0.6397244259203616).epsilon(1e-9));
  CHECK(r.mean.limit == Approx(498.2075).margin(5e-5));
  CHECK(r.mean.pass);
  CHECK(r.defectives == 0);
  CHECK(r.below_t2 == 0);
  CHECK(r.count_decision == SamplingDecision::kAccept);
  CHECK(r.accepted);

  // The same sample shifted down by 2 g: mean 498.19 < 498.2075 → mean check fails.
  std::vector<double> low = w;
  for (double& x : low) x -= 2.0;
  REQUIRE(RunReferenceTest(PlanFor("eu-destructive-single", 1000), low, l, &r).ok());
  CHECK_FALSE(r.mean.pass);
  CHECK_FALSE(r.accepted);
}

TEST_CASE("whole small lot: defectives at most 5 % and mean of all packs >= Qn", "[comply]") {
  // UK SI 2006/659 Sch 2 §3.6 and §4.7 [S] (check-values.md §1.3, §1.4).
  const SamplingPlan& p = PlanFor("uk-nondestructive-single", 60);
  const NetContentLimits l = Limits500();
  ReferenceTestResult r;
  REQUIRE(RunReferenceTest(p, Sample(60, 3, 503.0), l, &r).ok());  // 3/60 = 5 %
  CHECK(r.count_decision == SamplingDecision::kAccept);
  CHECK(r.mean.k == 0.0);
  CHECK(r.mean.mean > 500.0);
  CHECK(r.accepted);
  REQUIRE(RunReferenceTest(p, Sample(60, 4, 503.0), l, &r).ok());  // 4/60 > 5 %
  CHECK(r.count_decision == SamplingDecision::kReject);
  REQUIRE(RunReferenceTest(p, Sample(60, 0, 499.9), l, &r).ok());  // mean below Qn
  CHECK_FALSE(r.mean.pass);
  CHECK_FALSE(r.accepted);
}
