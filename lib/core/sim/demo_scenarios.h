// demo_scenarios.h — the named demo scenarios of the fictional Millbrook Oat Co.
// plant, for `heft feed`, the demo feeds and the detector tests.
//
// Lines: oats-1 (500 g rolled oats, 12-head filler), oats-2 (1000 g, 12 heads),
// honey-2 (340 g jars, 4-head filler). Condition sizes are stated in sigmas of
// the line they run on, so a scenario moved to another line keeps its meaning.
// Pure; the catalogue is immutable, so it is safe from any thread.
#pragma once

#include <cstdint>
#include <string_view>
#include <vector>

#include "core/model/status.h"
#include "core/sim/scenario.h"

namespace heft {

struct DemoScenarioInfo {
  std::string_view name;
  std::string_view default_line;
  std::string_view description;  // one line
};

// All named scenarios, in a fixed order.
const std::vector<DemoScenarioInfo>& DemoScenarios();

// The plant's line ids, in a fixed order.
const std::vector<std::string_view>& DemoLines();

// 2026-03-02T06:00:00.000Z, where every demo feed starts unless told otherwise.
inline constexpr std::int64_t kDemoStartTimeMs = 1772431200000;

// Builds scenario `name` on line `line_id` (empty = its default line). A known
// plant line brings its own product, fill level, sigma and heads; any other
// valid id runs the default line's settings under that id. The generator seed
// mixes `seed` with the line id, so a line's data depends only on (scenario,
// line, seed), not on what else is generated beside it.
Status MakeDemoScenario(std::string_view name, std::string_view line_id, std::uint64_t seed,
                        ScenarioSpec* out);

}  // namespace heft
