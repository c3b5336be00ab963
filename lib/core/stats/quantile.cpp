#include "core/stats/quantile.h"

#include <cmath>

namespace heft {

QuantilePosition QuantileAt(std::size_t n, double p, QuantileType type) {
  const double nd = static_cast<double>(n);
  // Same arithmetic as numpy 1.24 _compute_virtual_index so results agree to the last bit.
  const double virtual_index = type == QuantileType::kType7 ? (nd - 1.0) * p : nd * p + p - 1.0;
  QuantilePosition pos;
  if (!(virtual_index >= 0.0)) return pos;  // below the first value (or NaN p): the minimum
  if (virtual_index >= nd - 1.0) {
    pos.lower = pos.upper = n - 1;
    return pos;
  }
  const double below = std::floor(virtual_index);
  pos.lower = static_cast<std::size_t>(below);
  pos.upper = pos.lower + 1;
  pos.gamma = virtual_index - below;
  return pos;
}

double SortedQuantile(std::span<const double> sorted, double p, QuantileType type) {
  const QuantilePosition pos = QuantileAt(sorted.size(), p, type);
  return QuantileLerp(sorted[pos.lower], sorted[pos.upper], pos.gamma);
}

}  // namespace heft
