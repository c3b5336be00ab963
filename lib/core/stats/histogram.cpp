#include "core/stats/histogram.h"

#include <algorithm>
#include <cmath>

#include "core/stats/moments.h"
#include "core/stats/quantile.h"

namespace heft {
namespace {

constexpr double kPeakFloor = 0.2;     // a peak must reach 20 % of the highest one
constexpr double kValleyDepth = 0.75;  // and be separated by a valley <= 75 % of it

std::size_t CountPeaks(const std::vector<double>& s) {
  const std::size_t n = s.size();
  if (n == 0) return 0;
  const double top = *std::max_element(s.begin(), s.end());
  if (!(top > 0.0)) return 0;
  // Local maxima, treating a plateau of equal values as one candidate (outside is 0).
  std::vector<std::size_t> peaks;
  std::size_t i = 0;
  while (i < n) {
    std::size_t j = i;
    while (j + 1 < n && s[j + 1] == s[i]) ++j;
    const double left = i == 0 ? 0.0 : s[i - 1];
    const double right = j + 1 == n ? 0.0 : s[j + 1];
    if (s[i] > left && s[i] > right && s[i] >= kPeakFloor * top) peaks.push_back((i + j) / 2);
    i = j + 1;
  }
  // Merge neighbours without a real valley between them (keep the higher one).
  std::vector<std::size_t> kept;
  for (std::size_t p : peaks) {
    if (!kept.empty()) {
      const std::size_t q = kept.back();
      const double valley = *std::min_element(s.begin() + static_cast<std::ptrdiff_t>(q),
                                              s.begin() + static_cast<std::ptrdiff_t>(p) + 1);
      if (valley > kValleyDepth * std::min(s[p], s[q])) {
        if (s[p] > s[q]) kept.back() = p;
        continue;
      }
    }
    kept.push_back(p);
  }
  return kept.size();
}

}  // namespace

const char* BinRuleName(BinRule rule) {
  switch (rule) {
    case BinRule::kSquareRoot:
      return "sqrt";
    case BinRule::kSturges:
      return "sturges";
    case BinRule::kScott:
      return "scott";
    case BinRule::kFreedmanDiaconis:
      return "fd";
    case BinRule::kFixedWidth:
      return "fixed";
  }
  return "sqrt";
}

const char* HistogramShapeName(HistogramShape shape) {
  switch (shape) {
    case HistogramShape::kTooFew:
      return "too-few";
    case HistogramShape::kRoughlySymmetric:
      return "roughly-symmetric";
    case HistogramShape::kSkewedRight:
      return "skewed-right";
    case HistogramShape::kSkewedLeft:
      return "skewed-left";
    case HistogramShape::kTwoPeaked:
      return "two-peaked";
  }
  return "too-few";
}

RawBinning RawBins(std::span<const double> sorted, BinRule rule, double fixed_width) {
  RawBinning raw;
  const std::size_t n = sorted.size();
  if (n == 0) return raw;
  const double range = sorted.back() - sorted.front();
  const double nd = static_cast<double>(n);
  switch (rule) {
    case BinRule::kSquareRoot:
      raw.width = range / std::sqrt(nd);
      break;
    case BinRule::kSturges:
      raw.width = range / (std::log2(nd) + 1.0);
      break;
    case BinRule::kScott: {
      double mean = 0.0;
      for (double x : sorted) mean += x;
      mean /= nd;
      double ss = 0.0;
      for (double x : sorted) ss += (x - mean) * (x - mean);
      raw.width = std::pow(24.0 * std::sqrt(M_PI) / nd, 1.0 / 3.0) * std::sqrt(ss / nd);
      break;
    }
    case BinRule::kFreedmanDiaconis: {
      const double iqr = SortedQuantile(sorted, 0.75, QuantileType::kType7) -
                         SortedQuantile(sorted, 0.25, QuantileType::kType7);
      raw.width = 2.0 * iqr * std::pow(nd, -1.0 / 3.0);
      break;
    }
    case BinRule::kFixedWidth:
      raw.width = fixed_width > 0.0 ? fixed_width : 0.0;
      break;
  }
  raw.bins = raw.width > 0.0 ? static_cast<std::size_t>(std::ceil(range / raw.width)) : 1;
  if (raw.bins == 0) raw.bins = 1;  // range 0 with a fixed width
  return raw;
}

double NiceWidth(double width) {
  if (!(width > 0.0) || !std::isfinite(width)) return 1.0;
  const double decade = std::pow(10.0, std::floor(std::log10(width)));
  for (double m : {1.0, 2.0, 5.0, 10.0}) {
    // A width that is already on the series (0.2 computed as 0.20000000000000001) stays.
    if (m * decade >= width * (1.0 - 1e-12)) return m * decade;
  }
  return 10.0 * decade;
}

HistogramData ComputeHistogram(std::span<const double> sorted, const HistogramOptions& options) {
  HistogramData h;
  h.rule = options.rule;
  h.count = sorted.size();
  if (sorted.empty()) return h;
  const double lo = sorted.front();
  const double hi = sorted.back();
  const double range = hi - lo;
  const RawBinning raw = RawBins(sorted, options.rule, options.fixed_width);
  h.raw_bins = raw.bins;
  h.raw_width = raw.width;
  double target = raw.width;
  if (options.rule == BinRule::kSquareRoot && range > 0.0) {
    const std::size_t cells = std::clamp<std::size_t>(raw.bins, 5, 12);
    target = range / static_cast<double>(cells);
  }
  if (!(target > 0.0)) target = std::max(std::fabs(lo), 1.0) * 1e-3;  // no spread: one narrow bin
  if (range / target > static_cast<double>(kMaxHistogramBins)) {
    target = range / static_cast<double>(kMaxHistogramBins);
  }
  h.width = NiceWidth(target);
  double first = std::floor(lo / h.width);
  double last = std::ceil(hi / h.width);
  while (first * h.width > lo) first -= 1.0;
  while (last * h.width < hi) last += 1.0;
  if (last <= first) last = first + 1.0;
  const std::size_t bins = static_cast<std::size_t>(last - first);
  h.edges.resize(bins + 1);
  for (std::size_t i = 0; i <= bins; ++i) h.edges[i] = (first + static_cast<double>(i)) * h.width;
  h.counts.assign(bins, 0);
  for (double x : sorted) {
    double guess = std::floor((x - h.edges[0]) / h.width);
    std::size_t b = guess <= 0.0 ? 0 : std::min(bins - 1, static_cast<std::size_t>(guess));
    while (b > 0 && x < h.edges[b]) --b;
    while (b + 1 < bins && x >= h.edges[b + 1]) ++b;
    ++h.counts[b];
  }
  // Shape.
  h.smoothed.resize(bins);
  for (std::size_t i = 0; i < bins; ++i) {
    const double left = i == 0 ? 0.0 : static_cast<double>(h.counts[i - 1]);
    const double right = i + 1 == bins ? 0.0 : static_cast<double>(h.counts[i + 1]);
    h.smoothed[i] = (left + 2.0 * static_cast<double>(h.counts[i]) + right) / 4.0;
  }
  h.peaks = CountPeaks(h.smoothed);
  MomentAccumulator acc;
  for (double x : sorted) acc.Add(x);
  h.skewness = acc.Skewness();
  h.kurtosis = acc.ExcessKurtosis();
  const double n = static_cast<double>(sorted.size());
  if (sorted.size() >= 4 && h.skewness && h.kurtosis) {
    h.skewness_se = std::sqrt(6.0 * n * (n - 1.0) / ((n - 2.0) * (n + 1.0) * (n + 3.0)));
    h.bimodality = (*h.skewness * *h.skewness + 1.0) /
                   (*h.kurtosis + 3.0 * (n - 1.0) * (n - 1.0) / ((n - 2.0) * (n - 3.0)));
    const double skew_limit = std::max(kSymmetricSkewness, 2.0 * *h.skewness_se);
    if (*h.bimodality > kBimodalityThreshold && h.peaks >= 2) {
      h.shape = HistogramShape::kTwoPeaked;
    } else if (*h.skewness > skew_limit) {
      h.shape = HistogramShape::kSkewedRight;
    } else if (*h.skewness < -skew_limit) {
      h.shape = HistogramShape::kSkewedLeft;
    } else {
      h.shape = HistogramShape::kRoughlySymmetric;
    }
  }
  return h;
}

}  // namespace heft
