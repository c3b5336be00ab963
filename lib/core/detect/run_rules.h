// run_rules.h — the Western Electric / Nelson run rules on a stream of standardised
// points (for heft: subgroup means, one full turn of the filler each).
//
// Our ids, with the published numbers (Nelson, J. Quality Technology 16(4), 1984;
// Western Electric Statistical Quality Control Handbook, 1956; check-values.md §3):
//   beyond_limits      N1 / WE1  one point beyond `beyond_sigma`
//   long_run_one_side  N2 / WE4  `one_side_run` points in a row on one side (N2: 9, WE4: 8)
//   steady_trend       N3        `trend_run` points steadily rising or falling (6)
//   sawtooth           N4        `sawtooth_run` points alternating up and down (14)
//   two_of_three_far   N5 / WE2  2 of 3 beyond 2σ, same side
//   four_of_five_out   N6 / WE3  4 of 5 beyond 1σ, same side
//   hugging_centre     N7        15 in a row within 1σ, either side
//   avoiding_centre    N8        8 in a row outside 1σ, points on both sides
// "Beyond" is strict (>); equal successive values break N3 and N4 (check-values.md
// §3.2 leaves both to us). Each rule maps to an event kind (RunRuleKind).
//
// On a checkweigher stream the published counts alarm far too often, so
// RunRuleSettings::ForInControlArl() lengthens the runs and widens the zones until
// each rule's own in-control ARL (approximations written beside each formula) is
// at least its share of the budget. Pure; O(1) per point; not thread-safe.
#pragma once

#include <cstdint>
#include <optional>
#include <string_view>

#include "core/model/finding.h"

namespace heft {

enum class RunRuleId : std::uint8_t {
  kBeyondLimits,
  kTwoOfThreeFar,
  kFourOfFiveOut,
  kLongRunOneSide,
  kSteadyTrend,
  kSawtooth,
  kHuggingCentre,
  kAvoidingCentre,
};
inline constexpr int kRunRuleCount = 8;

std::string_view RunRuleName(RunRuleId rule);
// The event kind a rule reports: level rules → shift, trend → drift,
// sawtooth/avoiding → oscillation, hugging → spread (the spread is not what was learnt).
FindingKind RunRuleKind(RunRuleId rule);

struct RunRuleSettings {
  double beyond_sigma = 3.0;
  int far_count = 2, far_window = 3;
  double far_sigma = 2.0;
  int out_count = 4, out_window = 5;
  double out_sigma = 1.0;
  int one_side_run = 9;
  int trend_run = 6;
  int sawtooth_run = 14;
  int hugging_run = 15;
  double hugging_sigma = 1.0;
  int avoiding_run = 8;
  double avoiding_sigma = 1.0;
  bool enabled[kRunRuleCount] = {true, true, true, true, true, true, true, true};

  // Nelson's published rules (the defaults above).
  static RunRuleSettings Published() { return {}; }
  // Each enabled rule gets an equal share of `arl_points` (in-control ARL for all
  // of them together, in points): every rule's own ARL ≥ count × arl_points.
  static RunRuleSettings ForInControlArl(double arl_points);
};

class RunRules {
 public:
  explicit RunRules(const RunRuleSettings& settings) : s_(settings) {}

  // Adds one point. Returns the first rule (in enum order) that signals at this
  // point, if any; the state is then reset. `slack` (≥ 0, σ units) makes every
  // rule harder: points within ±slack of the centre count on neither side and all
  // zone edges move outward by slack (for the baseline's own uncertainty).
  std::optional<RunRuleId> Update(double z, double slack = 0.0);
  void Reset();
  const RunRuleSettings& settings() const { return s_; }

  // Restart checkpoint (line_monitor_checkpoint.h): the running statistics as plain values;
  // RestoreState(SaveState()) then the same inputs gives the same outputs.
  struct State {
    std::uint32_t far_up = 0, far_down = 0, out_up = 0, out_down = 0;
    int seen = 0, side_run = 0, trend_run = 0, saw_run = 0, last_move = 0, hug_run = 0,
        avoid_run = 0;
    bool avoid_up = false, avoid_down = false;
    double last = 0.0;
  };
  State SaveState() const {
    return {far_up_,  far_down_,  out_up_,  out_down_,  seen_,     side_run_,   trend_run_,
            saw_run_, last_move_, hug_run_, avoid_run_, avoid_up_, avoid_down_, last_};
  }
  void RestoreState(const State& s) {
    far_up_ = s.far_up;
    far_down_ = s.far_down;
    out_up_ = s.out_up;
    out_down_ = s.out_down;
    seen_ = s.seen;
    side_run_ = s.side_run;
    trend_run_ = s.trend_run;
    saw_run_ = s.saw_run;
    last_move_ = s.last_move;
    hug_run_ = s.hug_run;
    avoid_run_ = s.avoid_run;
    avoid_up_ = s.avoid_up;
    avoid_down_ = s.avoid_down;
    last_ = s.last;
  }

 private:
  RunRuleSettings s_;
  std::uint32_t far_up_ = 0, far_down_ = 0;  // bit i: point i steps ago beyond far_sigma
  std::uint32_t out_up_ = 0, out_down_ = 0;
  int seen_ = 0;
  int side_run_ = 0;   // signed: + above, − below
  int trend_run_ = 0;  // signed: + rises, − falls (count of successive moves)
  int saw_run_ = 0;    // alternating moves in a row
  int last_move_ = 0;  // sign of the last move
  int hug_run_ = 0;
  int avoid_run_ = 0;
  bool avoid_up_ = false, avoid_down_ = false;
  double last_ = 0.0;
};

}  // namespace heft
