// reference_test.cpp — sampling-plan decisions and the combined verdict.
#include "core/comply/reference_test.h"

#include <cmath>
#include <cstdio>
#include <string>

namespace heft::comply {

std::string_view SamplingDecisionName(SamplingDecision decision) {
  switch (decision) {
    case SamplingDecision::kAccept:
      return "accept";
    case SamplingDecision::kReject:
      return "reject";
    case SamplingDecision::kNextStage:
      return "next-stage";
  }
  return "?";
}

SamplingDecision DecideStage(const SamplingPlan& plan, std::size_t stage_index,
                             int cumulative_defectives) {
  if (stage_index >= plan.stages.size()) return SamplingDecision::kReject;
  const SamplingStage& stage = plan.stages[stage_index];
  if (cumulative_defectives <= stage.accept) return SamplingDecision::kAccept;
  if (cumulative_defectives >= stage.reject) return SamplingDecision::kReject;
  // Between the numbers: take the next sample; on the last stage (a table
  // with a gap there) be conservative.
  return stage_index + 1 < plan.stages.size() ? SamplingDecision::kNextStage
                                              : SamplingDecision::kReject;
}

double PlanMeanFactor(const MeanTest& test) {
  return test.n == 0 ? 0.0 : MeanCriterionFactor(test.n, test.quantile);
}

Status RunReferenceTest(const SamplingPlan& plan, std::span<const double> sample_g,
                        const NetContentLimits& limits, ReferenceTestResult* out) {
  for (std::size_t i = 0; i < sample_g.size(); ++i) {
    if (!std::isfinite(sample_g[i])) {
      return Status::Error("reference test: pack " + std::to_string(i + 1) +
                           " of the sample is not a finite weight");
    }
  }
  ReferenceTestResult result;
  auto is_defective = [&](double x) { return x < limits.t1_g; };
  auto is_t2 = [&](double x) { return limits.t2_g && x < *limits.t2_g; };

  if (plan.whole_lot) {
    if (sample_g.empty()) return Status::Error("reference test: the lot has no packs");
    for (double x : sample_g) {
      result.defectives += is_defective(x) ? 1 : 0;
      result.below_t2 += is_t2(x) ? 1 : 0;
    }
    result.packs_counted = static_cast<int>(sample_g.size());
    result.stages_used = 1;
    result.complete = true;
    // Compare counts, not fractions in floating point: d ≤ f·N.
    const double allowed = plan.whole_lot_max_defective_fraction * result.packs_counted;
    result.count_decision =
        result.defectives <= allowed + 1e-9 ? SamplingDecision::kAccept : SamplingDecision::kReject;
  } else {
    if (plan.stages.empty()) return Status::Error("reference test: the plan has no stages");
    if (sample_g.size() < static_cast<std::size_t>(plan.stages.front().size)) {
      return Status::Error("reference test: sample has " + std::to_string(sample_g.size()) +
                           " packs; the plan's first stage needs " +
                           std::to_string(plan.stages.front().size));
    }
    std::size_t used = 0;
    for (std::size_t stage = 0; stage < plan.stages.size(); ++stage) {
      const std::size_t size = static_cast<std::size_t>(plan.stages[stage].size);
      if (used + size > sample_g.size()) break;  // next stage not drawn yet
      for (std::size_t i = used; i < used + size; ++i) {
        result.defectives += is_defective(sample_g[i]) ? 1 : 0;
        result.below_t2 += is_t2(sample_g[i]) ? 1 : 0;
      }
      used += size;
      result.stages_used = static_cast<int>(stage + 1);
      result.count_decision = DecideStage(plan, stage, result.defectives);
      if (result.count_decision != SamplingDecision::kNextStage) break;
    }
    result.packs_counted = static_cast<int>(used);
    result.complete = result.count_decision != SamplingDecision::kNextStage;
  }

  if (plan.mean_test) {
    const std::size_t n =
        plan.mean_test->n == 0 ? sample_g.size() : static_cast<std::size_t>(plan.mean_test->n);
    if (n > sample_g.size()) {
      return Status::Error("reference test: sample has " + std::to_string(sample_g.size()) +
                           " packs; the mean test needs " + std::to_string(n));
    }
    const double k = PlanMeanFactor(*plan.mean_test);
    if (Status s = CheckMean(sample_g.first(n), limits.nominal_g, k, &result.mean); !s.ok()) {
      return s;
    }
    result.has_mean_check = true;
  }

  const bool mean_ok = !result.has_mean_check || result.mean.pass;
  result.accepted =
      result.complete && result.count_decision == SamplingDecision::kAccept && mean_ok;

  std::string text = std::to_string(result.defectives) + " defective of " +
                     std::to_string(result.packs_counted) + " counted (" +
                     std::to_string(result.stages_used) + " stage" +
                     (result.stages_used == 1 ? "" : "s") +
                     "): " + std::string(SamplingDecisionName(result.count_decision));
  if (result.has_mean_check) {
    char buf[160];
    std::snprintf(buf, sizeof buf, "; mean %.4f g vs limit %.4f g: %s", result.mean.mean,
                  result.mean.limit, result.mean.pass ? "pass" : "fail");
    text += buf;
  }
  result.summary = text;
  *out = result;
  return Status::Ok();
}

}  // namespace heft::comply
