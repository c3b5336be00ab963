// stats_bench.cpp — per-sample update cost of the statistics engine for count windows of
// 50, 500 and 5,000 packs: moments alone (RollingMoments), moments + exact order statistics
// (CountWindowStats), the same plus a median read per pack, and a time window; each beside
// a plain loop that only sums, with the ratio. Targets (issue #3): moments <= 30 ns,
// moments + order statistics <= 150 ns per sample at window 500. Build Release to measure.
//
// usage: heft_stats_bench [samples]   (default 4,000,000 per case)
#include <time.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <random>
#include <vector>

#include "core/stats/count_window_stats.h"
#include "core/stats/rolling_moments.h"
#include "core/stats/time_window_stats.h"

namespace {

// CPU time of this thread: on a shared machine wall time would include other jobs' turns.
double ThreadCpuNs() {
  timespec ts;
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
  return static_cast<double>(ts.tv_sec) * 1e9 + static_cast<double>(ts.tv_nsec);
}

template <class Fn>
double NsPerSample(std::size_t samples, Fn&& fn) {
  // Best of three, so a neighbour's build on the shared machine disturbs less.
  double best = 1e300;
  for (int rep = 0; rep < 3; ++rep) {
    const double start = ThreadCpuNs();
    fn();
    best = std::min(best, (ThreadCpuNs() - start) / static_cast<double>(samples));
  }
  return best;
}

volatile double g_sink;  // keeps results alive

}  // namespace

int main(int argc, char** argv) {
  const std::size_t samples = argc > 1 ? std::strtoull(argv[1], nullptr, 10) : 4000000;
  // Invented weights: 500 g bags of oats, sd 1.8 g, with a slow wander (Millbrook "oats-1").
  std::mt19937_64 rng(20260302);
  std::normal_distribution<double> noise(0.0, 1.8);
  std::vector<double> data(samples);
  for (std::size_t i = 0; i < samples; ++i) {
    data[i] = 503.0 + 0.8 * std::sin(static_cast<double>(i) * 1e-4) + noise(rng);
  }

  const double plain = NsPerSample(samples, [&] {
    double sum = 0.0;
    for (double x : data) sum += x;
    g_sink = sum;
  });
  std::printf("plain summing loop: %.2f ns/sample\n\n", plain);
  std::printf("%8s  %-34s %10s %10s\n", "window", "case", "ns/sample", "x plain");
  for (std::size_t window : {std::size_t{50}, std::size_t{500}, std::size_t{5000}}) {
    const double moments = NsPerSample(samples, [&] {
      heft::RollingMoments m(window);
      for (double x : data) m.Add(x);
      g_sink = m.Mean() + m.StdDev() + m.MovingRangeSigma();
    });
    const double ordered = NsPerSample(samples, [&] {
      heft::CountWindowStats w(window);
      for (double x : data) w.Add(x);
      g_sink = w.Quantile(0.5);
    });
    const double with_median = NsPerSample(samples, [&] {
      heft::CountWindowStats w(window);
      double acc = 0.0;
      for (double x : data) {
        w.Add(x);
        acc += w.Quantile(0.5);
      }
      g_sink = acc;
    });
    // Time window holding about `window` packs: one pack every 500 ms.
    const double timed = NsPerSample(samples, [&] {
      heft::TimeWindowStats w(static_cast<std::int64_t>(window) * 500);
      std::int64_t t = 0;
      for (double x : data) {
        w.Add(t, x);
        t += 500;
      }
      g_sink = w.Quantile(0.5);
    });
    const struct {
      const char* name;
      double ns;
    } rows[] = {{"moments (RollingMoments)", moments},
                {"moments + order stats", ordered},
                {"moments + order stats + median", with_median},
                {"time window, moments + order", timed}};
    for (const auto& row : rows) {
      std::printf("%8zu  %-34s %10.1f %10.1f\n", window, row.name, row.ns, row.ns / plain);
    }
  }
  return 0;
}
