#include "core/detect/mser.h"

namespace heft {

std::vector<double> MserCurve(std::span<const double> series) {
  const std::size_t n = series.size();
  std::vector<double> curve;
  if (n < 2) return curve;
  // Suffix sums about a reference value keep the sums of squares accurate.
  const double ref = series[n - 1];
  std::vector<double> suffix_sum(n + 1, 0.0), suffix_sq(n + 1, 0.0);
  for (std::size_t i = n; i-- > 0;) {
    const double y = series[i] - ref;
    suffix_sum[i] = suffix_sum[i + 1] + y;
    suffix_sq[i] = suffix_sq[i + 1] + y * y;
  }
  const std::size_t max_d = n / 2;
  curve.reserve(max_d + 1);
  for (std::size_t d = 0; d <= max_d; ++d) {
    const double m = static_cast<double>(n - d);
    double ss = suffix_sq[d] - suffix_sum[d] * suffix_sum[d] / m;
    if (ss < 0.0) ss = 0.0;
    curve.push_back(ss / (m * m));
  }
  return curve;
}

MserResult Mser(std::span<const double> series) {
  MserResult r;
  const std::vector<double> curve = MserCurve(series);
  if (curve.empty()) return r;
  std::size_t best = 0;
  for (std::size_t d = 1; d < curve.size(); ++d) {
    if (curve[d] < curve[best]) best = d;  // strict: ties keep the smallest d
  }
  r.truncate = best;
  r.statistic = curve[best];
  r.at_search_limit = best + 1 == curve.size() && curve.size() > 1;
  return r;
}

MserResult MserBatched(std::span<const double> series, std::size_t batch) {
  if (batch == 0) batch = 1;
  std::vector<double> means;
  means.reserve(series.size() / batch);
  for (std::size_t i = 0; i + batch <= series.size(); i += batch) {
    double s = 0.0;
    for (std::size_t j = 0; j < batch; ++j) s += series[i + j];
    means.push_back(s / static_cast<double>(batch));
  }
  MserResult r = Mser(means);
  r.truncate *= batch;
  return r;
}

}  // namespace heft
