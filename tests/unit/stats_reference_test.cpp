// Compares the statistics engine with numpy/scipy values stored in
// tests/reference/stats_reference.json (written by tests/reference/stats_reference.py with
// fixed seeds; process test test_stats_reference.py re-checks that file against numpy and
// scipy). Needs no Python. Tolerance 1e-9 relative unless stated. Tag [stats].
#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "core/stats/count_window_stats.h"
#include "core/stats/head_comparison.h"
#include "core/stats/histogram.h"
#include "core/stats/quantile.h"
#include "core/stats/runs_test.h"
#include "core/stats/window_summary.h"

namespace heft {
namespace {

const nlohmann::json& Reference() {
  static const nlohmann::json ref = [] {
    std::ifstream in(std::string(HEFT_SOURCE_DIR) + "/tests/reference/stats_reference.json");
    REQUIRE(in);
    return nlohmann::json::parse(in);
  }();
  return ref;
}

bool Close(double got, double want, double rel = 1e-9) {
  return got == want || std::fabs(got - want) <= rel * std::max(std::fabs(got), std::fabs(want));
}

TEST_CASE("numpy/scipy reference: moments, quantiles, shape, bins, runs", "[stats]") {
  const auto& sets = Reference().at("datasets");
  REQUIRE(sets.size() >= 8);
  for (const auto& [name, d] : sets.items()) {
    INFO("data set " << name);
    const std::vector<double> data = d.at("data").get<std::vector<double>>();
    std::vector<double> sorted = data;
    std::sort(sorted.begin(), sorted.end());
    const WindowSummary s = SummarizeSeries(data);
    CHECK(s.count == d.at("count").get<std::size_t>());
    CHECK(Close(s.mean, d.at("mean")));
    CHECK(Close(s.sd, d.at("sd")));
    CHECK(s.min == d.at("min").get<double>());
    CHECK(s.max == d.at("max").get<double>());
    CHECK(Close(s.mr_sigma, d.at("mr_sigma")));
    REQUIRE(s.skewness);
    // Shape: 1e-9 relative of a value that can be ~0.01 while the data sit at 1e6 g;
    // allow 1e-9 of the skewness or 1e-9 absolute (the third moment is a difference).
    CHECK(std::fabs(*s.skewness - d.at("skewness").get<double>()) <=
          1e-9 * std::max(1.0, std::fabs(*s.skewness)));
    CHECK(std::fabs(*s.kurtosis - d.at("kurtosis").get<double>()) <=
          1e-9 * std::max(1.0, std::fabs(*s.kurtosis)));
    const auto probs = d.at("probs").get<std::vector<double>>();
    const auto t7 = d.at("type7").get<std::vector<double>>();
    const auto t6 = d.at("type6").get<std::vector<double>>();
    for (std::size_t i = 0; i < probs.size(); ++i) {
      INFO("p = " << probs[i]);
      CHECK(Close(SortedQuantile(sorted, probs[i], QuantileType::kType7), t7[i], 1e-15));
      CHECK(Close(SortedQuantile(sorted, probs[i], QuantileType::kType6), t6[i], 1e-15));
    }
    // A count window as large as the data set gives the same order statistics.
    CountWindowStats window(data.size());
    for (double x : data) window.Add(x);
    CHECK(window.Quantile(0.25) == SortedQuantile(sorted, 0.25, QuantileType::kType7));
    CHECK(Close(window.Summary().mean, d.at("mean"), 1e-12));
    CHECK(Close(window.Summary().sd, d.at("sd"), 1e-9));
    // Raw bin counts (numpy.histogram_bin_edges).
    const auto& bins = d.at("raw_bins");
    CHECK(RawBins(sorted, BinRule::kSquareRoot).bins == bins.at("sqrt").get<std::size_t>());
    CHECK(RawBins(sorted, BinRule::kSturges).bins == bins.at("sturges").get<std::size_t>());
    CHECK(RawBins(sorted, BinRule::kScott).bins == bins.at("scott").get<std::size_t>());
    CHECK(RawBins(sorted, BinRule::kFreedmanDiaconis).bins == bins.at("fd").get<std::size_t>());
    // Runs about the median.
    const auto& runs = d.at("runs");
    const RunsTestResult r = RunChart(data);
    CHECK(r.centre == runs.at("centre").get<double>());
    CHECK(r.above == runs.at("above").get<std::size_t>());
    CHECK(r.below == runs.at("below").get<std::size_t>());
    CHECK(r.on_centre == runs.at("on_centre").get<std::size_t>());
    CHECK(r.runs == runs.at("runs").get<std::size_t>());
    CHECK(r.longest_run == runs.at("longest_run").get<std::size_t>());
    CHECK(Close(r.expected_runs, runs.at("expected_runs"), 1e-12));
    CHECK(Close(r.variance, runs.at("variance"), 1e-12));
    CHECK(Close(*r.z, runs.at("z"), 1e-9));
    const char* fewer = r.exact ? "p_fewer_exact" : "p_fewer_normal";
    const char* more = r.exact ? "p_more_exact" : "p_more_normal";
    CHECK(Close(*r.p_fewer, runs.at(fewer), 1e-9));
    CHECK(Close(*r.p_more, runs.at(more), 1e-9));
    // The exact distribution (lgamma-based) also holds where the normal one is used.
    double exact_fewer = 0.0;
    for (std::size_t k = 2; k <= r.runs; ++k) exact_fewer += RunsProbability(r.above, r.below, k);
    CHECK(Close(exact_fewer, runs.at("p_fewer_exact"), 1e-9));
  }
}

TEST_CASE("numpy/scipy reference: one-way ANOVA (scipy.stats.f_oneway)", "[stats]") {
  const auto& sets = Reference().at("anova");
  REQUIRE(sets.size() >= 2);
  for (const auto& [name, a] : sets.items()) {
    INFO("data set " << name);
    std::vector<HeadMoments> heads;
    int head = 1;
    for (const auto& group : a.at("groups")) {
      HeadMoments h;
      h.head = head++;
      for (double x : group.get<std::vector<double>>()) h.moments.Add(x);
      heads.push_back(h);
    }
    const HeadComparison c = CompareHeads(heads);
    REQUIRE(c.f);
    CHECK(Close(*c.f, a.at("f"), 1e-9));
    CHECK(Close(*c.p_value, a.at("p_value"), 1e-9));
  }
}

}  // namespace
}  // namespace heft
