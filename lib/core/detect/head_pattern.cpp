#include "core/detect/head_pattern.h"

#include <algorithm>
#include <cstddef>

namespace heft {

int HeadPatternPeriod(const HeadSums& sums) {
  const int heads = static_cast<int>(sums.count.size());
  if (heads < 2 || sums.sum.size() != sums.count.size()) return std::max(heads, 0);
  double grand = 0.0;
  for (int h = 0; h < heads; ++h) {
    const auto u = static_cast<std::size_t>(h);
    if (sums.count[u] < 1.0) return heads;
    grand += sums.sum[u] / sums.count[u] / heads;
  }
  auto mean = [&](int h) {
    const auto u = static_cast<std::size_t>(h);
    return sums.sum[u] / sums.count[u];
  };
  double total = 0.0;
  for (int h = 0; h < heads; ++h) total += (mean(h) - grand) * (mean(h) - grand);
  if (!(total > 0.0)) return heads;
  for (int p = 2; p < heads; ++p) {
    if (heads % p != 0) continue;
    double within = 0.0;
    for (int c = 0; c < p; ++c) {
      double m = 0.0;
      int k = 0;
      for (int h = c; h < heads; h += p, ++k) m += mean(h);
      m /= k;
      for (int h = c; h < heads; h += p) within += (mean(h) - m) * (mean(h) - m);
    }
    if (within < kHeadPatternUnexplained * total) return p;
  }
  return heads;
}

}  // namespace heft
