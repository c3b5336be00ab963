// stats_types.h — the value types the statistics engine hands to the rest of heft:
// window summary, box-plot data, histogram data, capability, runs test, head comparison.
//
// Detectors, compliance figures, reports, the live page and `heft stats` read these;
// none of them recomputes the figures on its own. Plain values (standard headers only,
// cheap to include); thread-agnostic. A figure that is undefined for the data at hand
// (skewness of 2 values, Cpk without limits, ...) is an empty std::optional.
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <vector>

namespace heft {

// Sample quantile definition, numbered as in Hyndman & Fan, American Statistician 50(4),
// 1996 (check-values.md §6.1). Type 7 = numpy method 'linear' (default, also R's default);
// type 6 = numpy 'weibull', clamped to min/max outside positions 1..n as numpy does.
enum class QuantileType : std::uint8_t { kType6 = 6, kType7 = 7 };

// Moments and order statistics of one window (count window, time window or a whole series).
struct WindowSummary {
  std::size_t count = 0;
  double mean = 0.0;
  double sd = 0.0;  // sample standard deviation, n − 1 divisor (0 when count < 2)
  double min = 0.0;
  double max = 0.0;
  double range = 0.0;     // max − min
  double mr_sigma = 0.0;  // short-term sigma: mean moving range of consecutive packs / d2(2)
  std::optional<double> skewness;  // bias-corrected G1 (scipy skew, bias=False); count >= 3
  std::optional<double> kurtosis;  // bias-corrected excess G2 (scipy kurtosis, bias=False); >= 4
  double q1 = 0.0;
  double median = 0.0;
  double q3 = 0.0;
  QuantileType quantile_type = QuantileType::kType7;
};

// Box-plot figures with Tukey fences (Tukey 1977, check-values.md §6.2; common practice).
struct BoxPlotData {
  std::size_t count = 0;
  QuantileType quantile_type = QuantileType::kType7;
  double min = 0.0, q1 = 0.0, median = 0.0, q3 = 0.0, max = 0.0;  // five-number summary
  double iqr = 0.0;
  double lower_fence = 0.0, upper_fence = 0.0;              // Q1 − 1.5 IQR, Q3 + 1.5 IQR
  double lower_outer_fence = 0.0, upper_outer_fence = 0.0;  // Q1 − 3 IQR, Q3 + 3 IQR
  double lower_whisker = 0.0, upper_whisker = 0.0;  // most extreme data inside the inner fences
  std::vector<double> outliers;                     // values outside the inner fences, ascending
  std::size_t far_out = 0;  // how many of them are also outside the outer fences
};

enum class BinRule : std::uint8_t {
  kSquareRoot,        // ⌈√n⌉ cells, kept within 5..12 (common practice)
  kSturges,           // ⌈log2 n⌉ + 1 cells
  kScott,             // width 3.49 σ n^(−1/3)
  kFreedmanDiaconis,  // width 2 IQR n^(−1/3)
  kFixedWidth,        // width given by the caller
};

enum class HistogramShape : std::uint8_t {
  kTooFew,  // fewer than 4 values or no spread: no verdict
  kRoughlySymmetric,
  kSkewedRight,
  kSkewedLeft,
  kTwoPeaked,
};

struct HistogramData {
  BinRule rule = BinRule::kSquareRoot;
  std::size_t count = 0;            // values binned
  std::size_t raw_bins = 0;         // bins the rule gives before nice rounding (numpy's count)
  double raw_width = 0.0;           // width the rule gives before nice rounding
  double width = 0.0;               // raw width rounded up to the 1-2-5 series
  std::vector<double> edges;        // bins.size() + 1 ascending edges, multiples of width
  std::vector<std::size_t> counts;  // [edge i, edge i+1); the last bin is closed
  // Shape summary and the figures behind it.
  HistogramShape shape = HistogramShape::kTooFew;
  std::optional<double> skewness;     // G1
  std::optional<double> skewness_se;  // standard error of G1 under normality
  std::optional<double> kurtosis;     // G2 (excess)
  std::optional<double> bimodality;  // Sarle's coefficient (g² + 1)/(k + 3(n−1)²/((n−2)(n−3)))
  std::vector<double> smoothed;      // counts smoothed with a 1-2-1 kernel
  std::size_t peaks = 0;             // distinct peaks on the smoothed histogram
};

// Capability against limits from the package rules (e.g. lower limit Qn − TNE). Packer's own
// control figures, not legal verification. check-values.md §7.
struct CapabilityData {
  std::size_t count = 0;
  std::optional<double> lower_limit;
  std::optional<double> upper_limit;
  double mean = 0.0;
  double sigma_within = 0.0;                // short-term: MR̄ / d2(2)
  double sigma_overall = 0.0;               // sample sd (n − 1)
  std::optional<double> cp, cpk, cpl, cpu;  // from sigma_within
  std::optional<double> pp, ppk, ppl, ppu;  // from sigma_overall
};

enum class CentreLine : std::uint8_t { kMedian, kMean };

// Runs about the centre line (Wald & Wolfowitz 1940; exact distribution as tabulated by
// Swed & Eisenhart 1943). Points equal to the centre are dropped before counting.
struct RunsTestResult {
  CentreLine centre_line = CentreLine::kMedian;
  double centre = 0.0;
  std::size_t used = 0;  // points above + below
  std::size_t above = 0;
  std::size_t below = 0;
  std::size_t on_centre = 0;  // dropped
  std::size_t runs = 0;
  std::size_t longest_run = 0;
  double expected_runs = 0.0;  // 2 n1 n2 / (n1 + n2) + 1
  double variance = 0.0;       // 2 n1 n2 (2 n1 n2 − n1 − n2) / ((n1 + n2)² (n1 + n2 − 1))
  std::optional<double> z;     // (runs − expected) / sqrt(variance), no continuity correction
  bool exact = false;          // p-values from the exact distribution (else normal approximation)
  std::optional<double> p_fewer;      // P(R <= runs): too few runs (shifts, clusters, trends)
  std::optional<double> p_more;       // P(R >= runs): too many runs (oscillation)
  std::optional<double> p_two_sided;  // min(1, 2 min(p_fewer, p_more))
};

struct HeadFigures {
  int head = -1;
  std::size_t count = 0;
  double mean = 0.0;
  double sd = 0.0;
  double offset = 0.0;  // mean − line mean
};

struct HeadComparison {
  std::size_t count = 0;  // packs over all heads
  double line_mean = 0.0;
  std::vector<HeadFigures> heads;  // ascending head number
  std::optional<double> f;         // one-way ANOVA F
  std::optional<double> p_value;   // P(F(df_between, df_within) >= f)
  std::size_t df_between = 0;
  std::size_t df_within = 0;
  std::vector<int> farthest;  // heads by |offset|, largest first (at most 3)
};

}  // namespace heft
