#include "core/stats/count_window_stats.h"

#include <cmath>

#include "core/stats/window_summary.h"

namespace heft {

CountWindowStats::CountWindowStats(std::size_t capacity) : moments_(capacity) {}

bool CountWindowStats::Add(double x) {
  if (!std::isfinite(x)) return false;
  if (moments_.full()) {
    order_.Erase(moments_.Oldest());  // the oldest value leaves
  }
  order_.Insert(x);
  moments_.Add(x);
  return true;
}

void CountWindowStats::Clear() {
  moments_.Clear();
  order_.Clear();
}

WindowSummary CountWindowStats::Summary(QuantileType type) const {
  WindowSummary s;
  s.quantile_type = type;
  s.count = moments_.count();
  if (s.count == 0) return s;
  s.mean = moments_.Mean();
  s.sd = moments_.StdDev();
  s.mr_sigma = moments_.MovingRangeSigma();
  s.skewness = moments_.Skewness();
  s.kurtosis = moments_.ExcessKurtosis();
  FillOrderFields(order_, type, &s);
  return s;
}

}  // namespace heft
