// reference_test.h — the reference test on a sample: count the defectives
// (packs below T1) against a sampling plan's acceptance/rejection numbers,
// stage by stage (double sampling where the plan has two stages), and apply
// the mean criterion.
//
// This reproduces the arithmetic of the published test for the packer's own
// control; it is not the legal metrology authority's check. Pure; thread-safe.
#pragma once

#include <span>
#include <string>

#include "core/comply/mean_criterion.h"
#include "core/comply/net_content_limits.h"
#include "core/comply/rule_table.h"
#include "core/model/status.h"

namespace heft::comply {

enum class SamplingDecision : std::uint8_t { kAccept, kReject, kNextStage };
std::string_view SamplingDecisionName(SamplingDecision decision);  // "accept", ...

// Decision after stage `stage_index` (0-based) given the cumulative number of
// defectives over stages 0..stage_index. The last stage never says kNextStage
// (the loader checks that its reject = accept + 1).
SamplingDecision DecideStage(const SamplingPlan& plan, std::size_t stage_index,
                             int cumulative_defectives);

// k for a plan's mean test: t(q; n − 1)/√n, or 0 for the whole-lot rule x̄ ≥ Qn.
double PlanMeanFactor(const MeanTest& test);

struct ReferenceTestResult {
  bool complete = false;  // false: the count needs the next stage's packs
  SamplingDecision count_decision = SamplingDecision::kNextStage;
  int stages_used = 0;
  int packs_counted = 0;        // packs the count looked at
  int defectives = 0;           // cumulative, below T1
  int below_t2 = 0;             // among packs_counted
  bool has_mean_check = false;  // plan has a mean test
  MeanCheck mean;               // valid if has_mean_check
  bool accepted = false;        // complete, count accepts and mean passes
  std::string summary;          // one line for people
};

// Runs `plan` on `sample_g` (packs in the order they were drawn: stage 1 then
// stage 2). For whole-lot plans the sample is the whole lot. The mean test uses
// the first `mean_test.n` packs (all packs for n = 0). Fails when the sample is
// smaller than the first stage or the mean test, or holds a non-finite weight.
Status RunReferenceTest(const SamplingPlan& plan, std::span<const double> sample_g,
                        const NetContentLimits& limits, ReferenceTestResult* out);

}  // namespace heft::comply
