// histogram.h — histogram data: bin count or width by a named rule, widths rounded up to
// the 1-2-5 series, edges on multiples of the width spanning the data, counts, and a
// shape summary (roughly symmetric / skewed right / skewed left / two-peaked) with the
// figures behind the verdict.
//
// Rules (check-values.md §6.3; formulas as numpy.histogram_bin_edges computes them, so the
// raw bin counts match numpy's):
//   square root  width = range/√n       (cell count then kept within 5..12: common practice)
//   Sturges      width = range/(log2 n + 1)
//   Scott        width = (24√π/n)^(1/3) σ, σ with divisor n
//   Freedman–Diaconis  width = 2 IQR n^(−1/3), IQR by type 7
//   raw bin count = ⌈range / width⌉ (1 when the width is 0).
// Shape: sample skewness G1 against max(0.5, 2 SE) (|G1| < 0.5 "approximately symmetric",
// Bulmer 1979 — common practice), Sarle's bimodality coefficient
// b = (G1² + 1)/(G2 + 3(n−1)²/((n−2)(n−3))) against 5/9 (common practice), and the peaks of
// the histogram smoothed with a 1-2-1 kernel (a peak counts if it reaches 20 % of the
// highest and a valley of at most 75 % of the lower peak separates it from the next one:
// our own thresholds). Two-peaked needs both b > 5/9 and two or more peaks.
// Used by `heft stats`, reports and the live page. Pure; thread-safe.
#pragma once

#include <span>

#include "core/stats/stats_types.h"

namespace heft {

inline constexpr double kBimodalityThreshold = 5.0 / 9.0;
inline constexpr double kSymmetricSkewness = 0.5;
inline constexpr std::size_t kMaxHistogramBins = 1000;

struct HistogramOptions {
  BinRule rule = BinRule::kSquareRoot;
  double fixed_width = 0.0;  // for kFixedWidth; must be > 0
};

// Width the rule gives (numpy's figure) and ⌈range / width⌉; for an empty input, zeros.
struct RawBinning {
  std::size_t bins = 0;
  double width = 0.0;
};
RawBinning RawBins(std::span<const double> sorted, BinRule rule, double fixed_width = 0.0);

// Stable names for JSON and tables: "sqrt", "sturges", "scott", "fd", "fixed";
// "too-few", "roughly-symmetric", "skewed-right", "skewed-left", "two-peaked".
const char* BinRuleName(BinRule rule);
const char* HistogramShapeName(HistogramShape shape);

// Smallest 1, 2 or 5 × 10^k that is >= width (width > 0).
double NiceWidth(double width);

// `sorted` ascending. A bin count above kMaxHistogramBins is reduced by widening the bins.
HistogramData ComputeHistogram(std::span<const double> sorted,
                               const HistogramOptions& options = HistogramOptions());

}  // namespace heft
