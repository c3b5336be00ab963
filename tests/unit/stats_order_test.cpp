// Tests of quantiles, the order-statistics structure, box plots and histograms. Tag [stats].
#include <algorithm>
#include <catch2/catch.hpp>
#include <random>
#include <set>
#include <vector>

#include "core/stats/box_plot.h"
#include "core/stats/histogram.h"
#include "core/stats/order_statistics.h"
#include "core/stats/quantile.h"

namespace heft {
namespace {

std::vector<double> OneTo(int n) {
  std::vector<double> v;
  for (int i = 1; i <= n; ++i) v.push_back(i);
  return v;
}

TEST_CASE("Quantiles of 1..10, types 6 and 7", "[stats]") {
  // check-values.md §6.1 (numpy 1.24.2 [X]; Hyndman & Fan 1996): type 6 Q1 2.75, median 5.5,
  // Q3 8.25; type 7 Q1 3.25, median 5.5, Q3 7.75.
  const std::vector<double> v = OneTo(10);
  CHECK(SortedQuantile(v, 0.25, QuantileType::kType6) == 2.75);
  CHECK(SortedQuantile(v, 0.5, QuantileType::kType6) == 5.5);
  CHECK(SortedQuantile(v, 0.75, QuantileType::kType6) == 8.25);
  CHECK(SortedQuantile(v, 0.25, QuantileType::kType7) == 3.25);
  CHECK(SortedQuantile(v, 0.5, QuantileType::kType7) == 5.5);
  CHECK(SortedQuantile(v, 0.75, QuantileType::kType7) == 7.75);
  CHECK(SortedQuantile(v, 0.0, QuantileType::kType7) == 1.0);
  CHECK(SortedQuantile(v, 1.0, QuantileType::kType7) == 10.0);
}

TEST_CASE("Type 6 on 15, 20, 35, 40, 50 and clamping outside 1..n", "[stats]") {
  // check-values.md §6.1: p 0.4 → 26, 0.5 → 35, 0.8 → 48 (spreadsheet PERCENTILE.EXC help,
  // equal to type 6 [S][X]). p 0.15 and 0.9 put the position outside 1..n: spreadsheets
  // give an error, numpy 'weibull' clamps to the min / max — we do as numpy.
  const std::vector<double> v{15, 20, 35, 40, 50};
  CHECK(SortedQuantile(v, 0.4, QuantileType::kType6) == Approx(26.0).epsilon(1e-14));
  CHECK(SortedQuantile(v, 0.5, QuantileType::kType6) == 35.0);
  CHECK(SortedQuantile(v, 0.8, QuantileType::kType6) == Approx(48.0).epsilon(1e-14));
  CHECK(SortedQuantile(v, 0.15, QuantileType::kType6) == 15.0);
  CHECK(SortedQuantile(v, 0.9, QuantileType::kType6) == 50.0);
  CHECK(SortedQuantile(std::vector<double>{7.5}, 0.3, QuantileType::kType6) == 7.5);
  CHECK(SortedQuantile(std::vector<double>{7.5}, 0.3, QuantileType::kType7) == 7.5);
}

TEST_CASE("OrderStatistics: random inserts and erases agree with a sorted multiset", "[stats]") {
  std::mt19937_64 rng(21);
  std::normal_distribution<double> noise(0.0, 2.0);
  OrderStatistics os;
  std::multiset<double> ref;
  std::vector<double> present;
  for (int step = 0; step < 40000; ++step) {
    // Grow to ~700, shrink to ~0, grow again: exercises block splits and merges.
    const int phase = (step / 8000) % 2;
    const bool insert = present.empty() || (rng() % 100) < (phase == 0 ? 60u : 35u);
    if (insert) {
      const double x = std::round((500.0 + noise(rng)) * 4.0) / 4.0;  // ties on purpose
      os.Insert(x);
      ref.insert(x);
      present.push_back(x);
    } else {
      const std::size_t i = rng() % present.size();
      REQUIRE(os.Erase(present[i]));
      ref.erase(ref.find(present[i]));
      present[i] = present.back();
      present.pop_back();
    }
    REQUIRE(os.size() == ref.size());
    if (step % 997 == 0 && !ref.empty()) {
      const std::vector<double> sorted(ref.begin(), ref.end());
      std::vector<double> got;
      os.SortedValues(&got);
      REQUIRE(got == sorted);
      for (std::size_t k = 0; k < sorted.size(); k += 7) CHECK(os.Select(k) == sorted[k]);
      CHECK(os.Min() == sorted.front());
      CHECK(os.Max() == sorted.back());
      for (double p : {0.0, 0.01, 0.25, 0.5, 0.75, 0.99, 1.0}) {
        CHECK(os.Quantile(p, QuantileType::kType7) ==
              SortedQuantile(sorted, p, QuantileType::kType7));
        CHECK(os.Quantile(p, QuantileType::kType6) ==
              SortedQuantile(sorted, p, QuantileType::kType6));
      }
    }
  }
  CHECK_FALSE(os.Erase(12345.0));  // not present: refused, nothing changes
  const std::size_t before = os.size();
  CHECK(os.size() == before);
  os.Clear();
  CHECK(os.empty());
  CHECK_FALSE(os.Erase(500.0));
}

TEST_CASE("Box plot of 1..10, 100 (check-values.md §6.2)", "[stats]") {
  std::vector<double> v = OneTo(10);
  v.push_back(100.0);
  // Type 7 [X]: Q1 3.5, Q3 8.5, IQR 5, fences −4 / 16, 100 an outlier, upper whisker 10.
  const BoxPlotData b7 = ComputeBoxPlot(v, QuantileType::kType7);
  CHECK(b7.count == 11);
  CHECK(b7.q1 == 3.5);
  CHECK(b7.median == 6.0);
  CHECK(b7.q3 == 8.5);
  CHECK(b7.iqr == 5.0);
  CHECK(b7.lower_fence == -4.0);
  CHECK(b7.upper_fence == 16.0);
  CHECK(b7.upper_whisker == 10.0);
  CHECK(b7.lower_whisker == 1.0);
  REQUIRE(b7.outliers.size() == 1);
  CHECK(b7.outliers[0] == 100.0);
  CHECK(b7.far_out == 1);  // outer fence Q3 + 3 IQR = 23.5
  CHECK(b7.min == 1.0);
  CHECK(b7.max == 100.0);
  // Type 6 [X]: Q1 3, Q3 9, IQR 6, fences −6 / 18, outer fences −15 / 27.
  const BoxPlotData b6 = ComputeBoxPlot(v, QuantileType::kType6);
  CHECK(b6.q1 == 3.0);
  CHECK(b6.q3 == 9.0);
  CHECK(b6.iqr == 6.0);
  CHECK(b6.lower_fence == -6.0);
  CHECK(b6.upper_fence == 18.0);
  CHECK(b6.lower_outer_fence == -15.0);
  CHECK(b6.upper_outer_fence == 27.0);
  CHECK(b6.upper_whisker == 10.0);
  CHECK(b6.outliers == std::vector<double>{100.0});
}

TEST_CASE("Box plot: outliers on both sides, inner but not outer", "[stats]") {
  // 20 packs within 499.5..500.45 g, one light (490) and one heavy (509): the IQR is about
  // half a gram, so both strays are far outside the fences and the whiskers stop at the
  // extremes of the 20.
  std::vector<double> v{490.0};
  for (int i = 0; i < 10; ++i) v.push_back(499.5 + 0.1 * i);
  for (int i = 0; i < 10; ++i) v.push_back(500.0 + 0.05 * i);
  v.push_back(509.0);
  std::sort(v.begin(), v.end());
  const BoxPlotData b = ComputeBoxPlot(v);
  CHECK(b.outliers.front() == 490.0);
  CHECK(b.outliers.back() == 509.0);
  CHECK(b.lower_whisker >= b.lower_fence);
  CHECK(b.upper_whisker <= b.upper_fence);
  CHECK(b.lower_whisker == 499.5);
  CHECK(b.upper_whisker == Approx(500.45));
  CHECK(ComputeBoxPlot(std::vector<double>{}).count == 0);
}

TEST_CASE("Histogram raw bin counts match numpy (check-values.md §6.3)", "[stats]") {
  // numpy 1.24.2 histogram_bin_edges [X]: 1..100 → sqrt 10, Sturges 8, Scott 5 (h 21.7095),
  // FD 5 (h 21.3289, IQR 49.5).
  const std::vector<double> v = OneTo(100);
  CHECK(RawBins(v, BinRule::kSquareRoot).bins == 10);
  CHECK(RawBins(v, BinRule::kSturges).bins == 8);
  CHECK(RawBins(v, BinRule::kScott).bins == 5);
  CHECK(RawBins(v, BinRule::kScott).width == Approx(21.7095).epsilon(1e-5));
  CHECK(RawBins(v, BinRule::kFreedmanDiaconis).bins == 5);
  CHECK(RawBins(v, BinRule::kFreedmanDiaconis).width == Approx(21.3289).epsilon(1e-5));
  // The 20 EWMA data of check-values.md §4.5 → sqrt 5, Sturges 6, Scott 3 (h 2.4681),
  // FD 4 (h 1.8420, IQR 2.5).
  std::vector<double> e{52.0, 47.0, 53.0, 49.3, 50.1, 47.0, 51.0, 50.1, 51.2, 50.5,
                        49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1};
  std::sort(e.begin(), e.end());
  CHECK(RawBins(e, BinRule::kSquareRoot).bins == 5);
  CHECK(RawBins(e, BinRule::kSturges).bins == 6);
  CHECK(RawBins(e, BinRule::kScott).bins == 3);
  CHECK(RawBins(e, BinRule::kScott).width == Approx(2.4681).epsilon(1e-4));
  CHECK(RawBins(e, BinRule::kFreedmanDiaconis).bins == 4);
  CHECK(RawBins(e, BinRule::kFreedmanDiaconis).width == Approx(1.8420).epsilon(1e-4));
  CHECK(RawBins(e, BinRule::kFixedWidth, 0.5).bins == 14);  // ⌈6.6 / 0.5⌉
}

TEST_CASE("Nice widths follow the 1-2-5 series", "[stats]") {
  CHECK(NiceWidth(0.7) == Approx(1.0));
  CHECK(NiceWidth(1.0) == Approx(1.0));
  CHECK(NiceWidth(1.3) == Approx(2.0));
  CHECK(NiceWidth(2.0) == Approx(2.0));
  CHECK(NiceWidth(2.01) == Approx(5.0));
  CHECK(NiceWidth(5.1) == Approx(10.0));
  CHECK(NiceWidth(0.2) == Approx(0.2));
  CHECK(NiceWidth(0.021) == Approx(0.05));
  CHECK(NiceWidth(137.0) == Approx(200.0));
}

TEST_CASE("Histogram: edges on multiples of the width span the data, counts add up", "[stats]") {
  std::vector<double> e{52.0, 47.0, 53.0, 49.3, 50.1, 47.0, 51.0, 50.1, 51.2, 50.5,
                        49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1};
  std::sort(e.begin(), e.end());
  // sqrt: ⌈√20⌉ = 5 cells (inside 5..12) → width 6.6/5 = 1.32 → nice 2; edges 46..54.
  const HistogramData h = ComputeHistogram(e);
  CHECK(h.raw_bins == 5);
  CHECK(h.width == 2.0);
  REQUIRE(h.edges.size() == 5);
  CHECK(h.edges.front() == 46.0);
  CHECK(h.edges.back() == 54.0);
  // Hand count: [46,48) 47, 47, 47.6, 47.8; [48,50) 49.3, 49.6, 49.9; [50,52) seven;
  // [52,54] 52.0, 52.1, 52.4, 52.6, 53.0, 53.6.
  CHECK(h.counts == std::vector<std::size_t>{4, 3, 7, 6});
  // Fixed width 0.5: a value on an edge goes to the bin it starts; the max to the last bin.
  HistogramOptions fixed;
  fixed.rule = BinRule::kFixedWidth;
  fixed.fixed_width = 0.5;
  const HistogramData f = ComputeHistogram(std::vector<double>{1.0, 1.5, 2.0}, fixed);
  CHECK(f.edges == std::vector<double>{1.0, 1.5, 2.0});
  CHECK(f.counts == std::vector<std::size_t>{1, 2});
  // 12 cells at most for the square-root rule (common practice): 10,000 packs.
  std::vector<double> many;
  for (int i = 0; i < 10000; ++i) many.push_back(500.0 + 0.001 * i);
  const HistogramData m = ComputeHistogram(many);
  CHECK(m.raw_bins >= 100);  // ⌈range / (range/√n)⌉: 100, or 101 after rounding
  CHECK(m.raw_bins <= 101);
  CHECK(m.counts.size() <= 12 + 1);
  CHECK(m.counts.size() >= 5);
  std::size_t total = 0;
  for (std::size_t c : m.counts) total += c;
  CHECK(total == 10000);
  // No spread: one bin, no shape verdict.
  const HistogramData flat = ComputeHistogram(std::vector<double>{500.0, 500.0, 500.0, 500.0});
  CHECK(flat.counts == std::vector<std::size_t>{4});
  CHECK(flat.shape == HistogramShape::kTooFew);
}

TEST_CASE("Histogram shape verdicts", "[stats]") {
  std::mt19937_64 rng(31);
  std::normal_distribution<double> normal(0.0, 1.0);
  std::lognormal_distribution<double> lognormal(0.5, 0.6);
  std::vector<double> sym, right, left, two;
  for (int i = 0; i < 2000; ++i) {
    sym.push_back(503.0 + 1.8 * normal(rng));
    const double l = lognormal(rng);
    right.push_back(340.0 + l);
    left.push_back(350.0 - l);
    two.push_back(i % 2 == 0 ? 497.0 + normal(rng) : 505.0 + normal(rng));
  }
  for (auto* v : {&sym, &right, &left, &two}) std::sort(v->begin(), v->end());
  const HistogramData hs = ComputeHistogram(sym);
  CHECK(hs.shape == HistogramShape::kRoughlySymmetric);
  CHECK(hs.peaks == 1);
  const HistogramData hr = ComputeHistogram(right);
  CHECK(hr.shape == HistogramShape::kSkewedRight);
  CHECK(*hr.skewness > 1.0);
  CHECK(ComputeHistogram(left).shape == HistogramShape::kSkewedLeft);
  const HistogramData ht = ComputeHistogram(two);
  CHECK(ht.shape == HistogramShape::kTwoPeaked);
  CHECK(ht.peaks == 2);
  REQUIRE(ht.bimodality);
  CHECK(*ht.bimodality > kBimodalityThreshold);
  // Sarle's b from its own figures: (g² + 1)/(k + 3(n−1)²/((n−2)(n−3))).
  const double n = 2000.0;
  CHECK(*ht.bimodality == Approx((*ht.skewness * *ht.skewness + 1.0) /
                                 (*ht.kurtosis + 3.0 * (n - 1) * (n - 1) / ((n - 2) * (n - 3)))));
  CHECK(std::string(HistogramShapeName(ht.shape)) == "two-peaked");
  CHECK(std::string(BinRuleName(BinRule::kFreedmanDiaconis)) == "fd");
}

}  // namespace
}  // namespace heft
