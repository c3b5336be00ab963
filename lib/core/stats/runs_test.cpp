#include "core/stats/runs_test.h"

#include <algorithm>
#include <cmath>
#include <vector>

#include "core/stats/quantile.h"

namespace heft {
namespace {

double LogChoose(double n, double k) {
  return std::lgamma(n + 1.0) - std::lgamma(k + 1.0) - std::lgamma(n - k + 1.0);
}

// C(a, b) * C(c, d) / C(n, n1) in logs; 0 when a binomial is out of range.
double Term(double a, double b, double c, double d, double log_total) {
  if (b < 0.0 || b > a || d < 0.0 || d > c) return 0.0;
  return std::exp(LogChoose(a, b) + LogChoose(c, d) - log_total);
}

double NormalUpper(double z) { return 0.5 * std::erfc(z / std::sqrt(2.0)); }

}  // namespace

double RunsProbability(std::size_t n1_count, std::size_t n2_count, std::size_t r) {
  if (n1_count == 0 || n2_count == 0 || r < 2) return 0.0;
  const double n1 = static_cast<double>(n1_count);
  const double n2 = static_cast<double>(n2_count);
  const double log_total = LogChoose(n1 + n2, n1);
  const double k = static_cast<double>(r / 2);
  if (r % 2 == 0) return 2.0 * Term(n1 - 1.0, k - 1.0, n2 - 1.0, k - 1.0, log_total);
  return Term(n1 - 1.0, k, n2 - 1.0, k - 1.0, log_total) +
         Term(n1 - 1.0, k - 1.0, n2 - 1.0, k, log_total);
}

RunsTestResult RunsAboutCentre(std::span<const double> series, double centre, CentreLine line) {
  RunsTestResult r;
  r.centre_line = line;
  r.centre = centre;
  int previous_side = 0;
  std::size_t current = 0;
  for (double x : series) {
    const int side = x > centre ? 1 : (x < centre ? -1 : 0);
    if (side == 0) {
      ++r.on_centre;
      continue;
    }
    side > 0 ? ++r.above : ++r.below;
    if (side != previous_side) {
      ++r.runs;
      current = 1;
    } else {
      ++current;
    }
    r.longest_run = std::max(r.longest_run, current);
    previous_side = side;
  }
  r.used = r.above + r.below;
  if (r.above == 0 || r.below == 0) return r;  // one side only: no test
  const double n1 = static_cast<double>(r.above);
  const double n2 = static_cast<double>(r.below);
  const double n = n1 + n2;
  r.expected_runs = 2.0 * n1 * n2 / n + 1.0;
  r.variance = n > 1.0 ? 2.0 * n1 * n2 * (2.0 * n1 * n2 - n1 - n2) / (n * n * (n - 1.0)) : 0.0;
  if (r.variance > 0.0) {
    r.z = (static_cast<double>(r.runs) - r.expected_runs) / std::sqrt(r.variance);
  }
  r.exact = r.used <= 100 || std::min(r.above, r.below) <= 20;
  if (r.exact) {
    double fewer = 0.0, more = 0.0;
    const std::size_t max_runs = 2 * std::min(r.above, r.below) + 1;
    for (std::size_t k = 2; k <= max_runs; ++k) {
      const double p = RunsProbability(r.above, r.below, k);
      if (k <= r.runs) fewer += p;
      if (k >= r.runs) more += p;
    }
    r.p_fewer = std::min(1.0, fewer);
    r.p_more = std::min(1.0, more);
  } else if (r.z) {
    r.p_fewer = NormalUpper(-*r.z);
    r.p_more = NormalUpper(*r.z);
  }
  if (r.p_fewer && r.p_more) r.p_two_sided = std::min(1.0, 2.0 * std::min(*r.p_fewer, *r.p_more));
  return r;
}

RunsTestResult RunChart(std::span<const double> series, CentreLine line) {
  if (series.empty()) {
    RunsTestResult r;
    r.centre_line = line;
    return r;
  }
  double centre = 0.0;
  if (line == CentreLine::kMedian) {
    std::vector<double> sorted(series.begin(), series.end());
    std::sort(sorted.begin(), sorted.end());
    centre = SortedQuantile(sorted, 0.5, QuantileType::kType7);
  } else {
    double sum = 0.0;  // two-pass mean: exact enough and independent of any window
    for (double x : series) sum += x;
    centre = sum / static_cast<double>(series.size());
    double correction = 0.0;
    for (double x : series) correction += x - centre;
    centre += correction / static_cast<double>(series.size());
  }
  return RunsAboutCentre(series, centre, line);
}

}  // namespace heft
