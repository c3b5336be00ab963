#include "core/stats/window_summary.h"

#include <algorithm>
#include <cmath>
#include <vector>

#include "core/stats/control_constants.h"
#include "core/stats/moments.h"
#include "core/stats/quantile.h"

namespace heft {

WindowSummary SummarizeSeries(std::span<const double> values, QuantileType type) {
  WindowSummary s;
  s.quantile_type = type;
  if (values.empty()) return s;
  MomentAccumulator acc;
  double sum_mr = 0.0;
  for (std::size_t i = 0; i < values.size(); ++i) {
    acc.Add(values[i]);
    if (i > 0) sum_mr += std::fabs(values[i] - values[i - 1]);
  }
  s.count = acc.count();
  s.mean = acc.Mean();
  s.sd = acc.StdDev();
  s.skewness = acc.Skewness();
  s.kurtosis = acc.ExcessKurtosis();
  s.mr_sigma = s.count < 2 ? 0.0 : sum_mr / static_cast<double>(s.count - 1) / kD2Span2;
  std::vector<double> sorted(values.begin(), values.end());
  std::sort(sorted.begin(), sorted.end());
  s.min = sorted.front();
  s.max = sorted.back();
  s.range = s.max - s.min;
  s.q1 = SortedQuantile(sorted, 0.25, type);
  s.median = SortedQuantile(sorted, 0.5, type);
  s.q3 = SortedQuantile(sorted, 0.75, type);
  return s;
}

void FillOrderFields(const OrderStatistics& tree, QuantileType type, WindowSummary* s) {
  s->quantile_type = type;
  s->min = tree.Min();
  s->max = tree.Max();
  s->range = s->max - s->min;
  s->q1 = tree.Quantile(0.25, type);
  s->median = tree.Quantile(0.5, type);
  s->q3 = tree.Quantile(0.75, type);
}

}  // namespace heft
