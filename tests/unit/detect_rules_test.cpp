// Run rules against the rule test vectors of check-values.md §3.2 [X] (first signal,
// 1-based), with Nelson's published counts (Nelson, JQT 16(4), 1984).
#include "core/detect/run_rules.h"

#include <catch2/catch.hpp>

#include <optional>
#include <vector>

using namespace heft;

namespace {
struct FirstSignal {
  int index = 0;  // 1-based; 0 = none
  std::optional<RunRuleId> rule;
};

FirstSignal Run(const std::vector<double>& z, RunRuleSettings s = RunRuleSettings::Published()) {
  RunRules rules(s);
  for (std::size_t i = 0; i < z.size(); ++i) {
    if (auto r = rules.Update(z[i])) return {static_cast<int>(i) + 1, r};
  }
  return {};
}
}  // namespace

TEST_CASE("run rules: check-values §3.2 vectors give the first signal and only the named rule",
          "[detect][rules]") {
  SECTION("beyond_limits (N1/WE1)") {
    auto a = Run({0.0, 3.01});
    CHECK(a.index == 2);
    CHECK(a.rule == RunRuleId::kBeyondLimits);
    CHECK(Run({0.0, 3.0}).index == 0);  // strict ">"
  }
  SECTION("two_of_three_far (N5/WE2)") {
    auto a = Run({2.5, 0.0, 2.1});
    CHECK(a.index == 3);
    CHECK(a.rule == RunRuleId::kTwoOfThreeFar);
    CHECK(Run({2.5, -2.5, 0.0}).index == 0);  // opposite sides
  }
  SECTION("four_of_five_out (N6/WE3)") {
    auto a = Run({1.5, 1.2, 0.3, 1.1, 1.8});
    CHECK(a.index == 5);
    CHECK(a.rule == RunRuleId::kFourOfFiveOut);
  }
  SECTION("long_run_one_side: WE4 with 8, N2 with 9") {
    RunRuleSettings we4 = RunRuleSettings::Published();
    we4.one_side_run = 8;
    auto a = Run(std::vector<double>(8, 0.1), we4);
    CHECK(a.index == 8);
    CHECK(a.rule == RunRuleId::kLongRunOneSide);
    CHECK(Run(std::vector<double>(8, 0.1)).index == 0);
    CHECK(Run(std::vector<double>(9, 0.1)).index == 9);
  }
  SECTION("steady_trend (N3)") {
    auto a = Run({-1.0, -0.6, -0.2, 0.2, 0.6, 1.0});
    CHECK(a.index == 6);
    CHECK(a.rule == RunRuleId::kSteadyTrend);
    CHECK(Run({-1.0, -0.6, -0.2, 0.2, 0.6}).index == 0);
    CHECK(Run({-1.0, -0.6, -0.2, -0.2, 0.6, 1.0}).index == 0);  // a tie breaks the run
  }
  SECTION("sawtooth (N4)") {
    std::vector<double> z;
    for (int i = 0; i < 7; ++i) {
      z.push_back(-0.5);
      z.push_back(0.5);
    }
    auto a = Run(z);
    CHECK(a.index == 14);
    CHECK(a.rule == RunRuleId::kSawtooth);
    z.pop_back();
    CHECK(Run(z).index == 0);
  }
  SECTION("hugging_centre (N7)") {
    auto a = Run({0.1, 0.2, -0.3, 0.4, -0.1, 0.3, 0.2, -0.2, 0.1, 0.05, -0.4, 0.3, 0.1, -0.1, 0.2});
    CHECK(a.index == 15);
    CHECK(a.rule == RunRuleId::kHuggingCentre);
  }
  SECTION("avoiding_centre (N8)") {
    auto a = Run({1.5, -1.5, 1.5, -1.5, 1.5, -1.5, 1.5, -1.5});
    CHECK(a.index == 8);
    CHECK(a.rule == RunRuleId::kAvoidingCentre);
    CHECK(Run(std::vector<double>(8, 1.5)).rule != RunRuleId::kAvoidingCentre);  // one side only
  }
}

TEST_CASE("run rules map to event kinds and have our ids", "[detect][rules]") {
  CHECK(RunRuleName(RunRuleId::kLongRunOneSide) == "long_run_one_side");
  CHECK(RunRuleKind(RunRuleId::kLongRunOneSide) == FindingKind::kShift);
  CHECK(RunRuleKind(RunRuleId::kSteadyTrend) == FindingKind::kDrift);
  CHECK(RunRuleKind(RunRuleId::kSawtooth) == FindingKind::kOscillation);
  CHECK(RunRuleKind(RunRuleId::kHuggingCentre) == FindingKind::kSpread);
}

TEST_CASE("stream-fit run rules are longer and wider than the published ones", "[detect][rules]") {
  const RunRuleSettings s = RunRuleSettings::ForInControlArl(1e5);
  // N1 share 8e5 points: limit = scipy.stats.norm.isf(1 / 1.6e6) = 4.847543.
  CHECK(s.beyond_sigma == Approx(4.847543).epsilon(1e-5));
  CHECK(s.one_side_run >= 20);  // 2ⁿ ≥ 8e5
  CHECK(s.trend_run >= 10);     // 10!/2 = 1.8e6
  CHECK(s.sawtooth_run > 14);
  CHECK(s.hugging_run > 15);
  CHECK(s.avoiding_run > 8);
  // Slack makes a rule harder: a point at 3.2 passes 3 but not 3 + 0.3.
  RunRules plain(RunRuleSettings::Published());
  RunRules slack(RunRuleSettings::Published());
  CHECK(plain.Update(3.2).has_value());
  CHECK_FALSE(slack.Update(3.2, 0.3).has_value());
}
