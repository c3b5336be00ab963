#include "core/design/western_electric_arl.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdint>
#include <deque>
#include <limits>
#include <unordered_map>
#include <vector>

#include "core/design/standard_normal.h"

namespace heft {
namespace {

// What a past point still means to the rules. Side +1/−1; level 2 = beyond 2σ,
// 1 = beyond 1σ (not 2σ), 0 = neither (the side then lives in the run).
struct Mark {
  int side = 0;
  int level = 0;
};

constexpr int kHistory = 4;  // WE3 looks at the current point and 4 before it
constexpr int kMaxRun = 7;   // WE4 signals at the 8th

struct State {
  std::array<Mark, kHistory> past{};  // past[0] = the latest point
  int run = 0;                        // signed same-side run length, |run| ≤ 7

  std::uint32_t Key() const {
    std::uint32_t key = static_cast<std::uint32_t>(run + kMaxRun);
    for (const Mark& m : past) {
      key = key * 8u + static_cast<std::uint32_t>((m.side + 1) * 3 + m.level);
    }
    return key;
  }
};

// The 8 zones of a new point: side and level (3 = beyond 3σ).
struct Zone {
  int side;
  int level;
  double lo;
  double hi;
};

constexpr double kBig = std::numeric_limits<double>::infinity();
constexpr std::array<Zone, 8> kZones = {{{+1, 3, 3.0, kBig},
                                         {+1, 2, 2.0, 3.0},
                                         {+1, 1, 1.0, 2.0},
                                         {+1, 0, 0.0, 1.0},
                                         {-1, 0, -1.0, 0.0},
                                         {-1, 1, -2.0, -1.0},
                                         {-1, 2, -3.0, -2.0},
                                         {-1, 3, -kBig, -3.0}}};

// Forget what no enabled rule can use any more.
State Canonical(State s, const WesternElectricRules& rules) {
  for (int age = 0; age < kHistory; ++age) {
    Mark& m = s.past[age];
    const bool we2_sees = rules.two_of_three && age < 2;  // 2 of the last 3
    const bool we3_sees = rules.four_of_five && age < 4;  // 4 of the last 5
    int level = m.level;
    if (level == 2 && !we2_sees) level = 1;  // still beyond 1σ for WE3
    if (level == 1 && !we3_sees) level = 0;
    m.level = level;
    if (level == 0) m.side = 0;
  }
  if (!rules.eight_one_side) s.run = 0;
  return s;
}

// Advances `s` by a point in zone `z`; returns false when a rule signals.
bool Step(const State& s, const Zone& z, const WesternElectricRules& rules, State* next) {
  if (z.level == 3 && rules.beyond_3_sigma) return false;
  const int level = std::min(z.level, 2);  // beyond 3σ is also beyond 2σ
  if (rules.two_of_three && level == 2) {
    int count = 1;
    for (int age = 0; age < 2; ++age) count += s.past[age].side == z.side && s.past[age].level == 2;
    if (count >= 2) return false;
  }
  if (rules.four_of_five && level >= 1) {
    int count = 1;
    for (int age = 0; age < 4; ++age) count += s.past[age].side == z.side && s.past[age].level >= 1;
    if (count >= 4) return false;
  }
  int run = z.side;
  if (s.run != 0 && (s.run > 0) == (z.side > 0)) run = s.run + z.side;
  if (rules.eight_one_side && std::abs(run) >= kMaxRun + 1) return false;
  State n;
  n.past[0] = {z.side, level};
  for (int age = 1; age < kHistory; ++age) n.past[age] = s.past[age - 1];
  n.run = std::clamp(run, -kMaxRun, kMaxRun);
  *next = Canonical(n, rules);
  return true;
}

}  // namespace

RunRuleArl WesternElectricArl(const WesternElectricRules& rules, double delta) {
  RunRuleArl result;
  std::array<double, 8> p{};
  for (std::size_t z = 0; z < kZones.size(); ++z) {
    p[z] = NormalCdf(kZones[z].hi - delta) - NormalCdf(kZones[z].lo - delta);
  }
  // Breadth-first walk over the reachable states, recording the sparse rows.
  struct Entry {
    int to;
    double probability;
  };
  std::vector<std::vector<Entry>> rows;
  std::unordered_map<std::uint32_t, int> index;
  std::vector<State> states;
  const State start = Canonical(State{}, rules);
  index.emplace(start.Key(), 0);
  states.push_back(start);
  for (std::size_t i = 0; i < states.size(); ++i) {
    std::vector<Entry> row;
    for (std::size_t z = 0; z < kZones.size(); ++z) {
      State next;
      if (!Step(states[i], kZones[z], rules, &next)) continue;  // absorbed: alarm
      const auto [it, inserted] = index.emplace(next.Key(), static_cast<int>(states.size()));
      if (inserted) states.push_back(next);
      row.push_back({it->second, p[z]});
    }
    rows.push_back(std::move(row));
  }
  result.states = static_cast<int>(states.size());
  // Gauss–Seidel on L = 1 + Q·L, stopping when a sweep changes no ARL by more
  // than 1e-12 relative; iterations are capped so a chart that (almost) never
  // signals cannot hang the caller.
  std::vector<double> arl(states.size(), 1.0);
  for (int sweep = 0; sweep < 200000; ++sweep) {
    double change = 0.0;
    for (std::size_t i = 0; i < rows.size(); ++i) {
      double v = 1.0;
      for (const Entry& e : rows[i]) v += e.probability * arl[e.to];
      change = std::max(change, std::fabs(v - arl[i]) / v);
      arl[i] = v;
    }
    if (change < 1e-12) {
      result.converged = true;
      break;
    }
  }
  result.arl = arl[0];
  return result;
}

}  // namespace heft
