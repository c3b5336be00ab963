#include "core/design/shewhart_arl.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/design/standard_normal.h"

namespace heft {

double ShewhartSignalProbability(double limit, double delta, int subgroup) {
  const double moved = delta * std::sqrt(static_cast<double>(std::max(1, subgroup)));
  return NormalCdf(-limit - moved) + NormalUpperTail(limit - moved);
}

double ShewhartArl(double limit, double delta, int subgroup) {
  const double p = ShewhartSignalProbability(limit, delta, subgroup);
  return p > 0.0 ? 1.0 / p : std::numeric_limits<double>::infinity();
}

}  // namespace heft
