// pipeline_bench.cpp — per-stage cost of heft's ingest and detection pipeline, for
// tools/bench (a benchmark, not a test). Build Release for figures.
//
//   heft_pipeline_bench stages [SAMPLES [L,..]] ns per sample of each stage: framing + parse,
//                                            parse alone, rolling statistics, each detector,
//                                            the whole LineMonitor, Plant with 1/20/200 lines,
//                                            and heap bytes per line
//   heft_pipeline_bench sqlite DB ROWS       SQLite raw-sample rows/s through SqliteStore
//                                            (the daemon's batched writes, 5,000 per batch)
//   heft_pipeline_bench rolling FEED WINDOW  the pandas baseline's job (tools/pandas_baseline.py)
//                                            done by heft's engine: per line a count window's
//                                            mean, sd, median, quartiles, an EWMA and a two-sided
//                                            tabular CUSUM; prints a JSON summary to compare
//
// Output lines are "name<TAB>value<TAB>unit" so tools/bench can read them. Times are this
// thread's CPU time (best of three for stages) so other jobs on the shared machine disturb
// less. Weights are invented (Millbrook "oats-1", 500 g bags, sd 1.6 g, 12 heads).
#include <malloc.h>
#include <time.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <iterator>
#include <map>
#include <memory>
#include <random>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "core/detect/detector_design.h"
#include "core/detect/ewma_chart.h"
#include "core/detect/head_cusum.h"
#include "core/detect/log_variance_cusum.h"
#include "core/detect/periodicity_test.h"
#include "core/detect/run_rules.h"
#include "core/detect/stuck_reading.h"
#include "core/detect/tabular_cusum.h"
#include "core/model/pack.h"
#include "core/monitor/line_monitor.h"
#include "core/monitor/plant.h"
#include "core/monitor/stream_ingest.h"
#include "core/record/line_framer.h"
#include "core/record/native_record.h"
#include "core/stats/count_window_stats.h"
#include "core/stats/rolling_moments.h"
#include "io/sqlite_store.h"

namespace {

constexpr std::int64_t kStartMs = 1772431200000;  // 2026-03-02T06:00:00Z
constexpr int kHeads = 12;

double ThreadCpuNs() {
  timespec ts;
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
  return static_cast<double>(ts.tv_sec) * 1e9 + static_cast<double>(ts.tv_nsec);
}

double WallNs() {
  timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return static_cast<double>(ts.tv_sec) * 1e9 + static_cast<double>(ts.tv_nsec);
}

template <class Fn>
double NsPer(std::size_t count, Fn&& fn) {
  double best = 1e300;
  for (int rep = 0; rep < 3; ++rep) {
    const double start = ThreadCpuNs();
    fn();
    best = std::min(best, (ThreadCpuNs() - start) / static_cast<double>(count));
  }
  return best;
}

volatile double g_sink;

void Print(const char* name, double value, const char* unit) {
  std::printf("%s\t%.2f\t%s\n", name, value, unit);
  std::fflush(stdout);
}

struct Sample {
  double grams;
  int head;
};

std::vector<Sample> MakeSamples(std::size_t n, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> noise(0.0, 1.6);
  std::vector<Sample> out(n);
  for (std::size_t i = 0; i < n; ++i) {
    const int head = static_cast<int>(i % kHeads);
    out[i] = {std::round((503.0 + 0.3 * std::sin(head) + noise(rng)) * 10.0) / 10.0, head};
  }
  return out;
}

// A native feed of `n` records over `lines` lines (round robin), epoch-ms times.
std::string MakeFeed(const std::vector<Sample>& samples, int lines) {
  std::string feed = "time,line,head,weight\n";
  char buf[96];
  for (std::size_t i = 0; i < samples.size(); ++i) {
    const int line = static_cast<int>(i % static_cast<std::size_t>(lines));
    const int len =
        std::snprintf(buf, sizeof buf, "%lld,bench-%03d,%d,%.1f\n",
                      static_cast<long long>(kStartMs + 500 * static_cast<std::int64_t>(i / lines)),
                      line, samples[i].head, samples[i].grams);
    feed.append(buf, static_cast<std::size_t>(len));
  }
  return feed;
}

heft::LineSettings BenchLine() {
  heft::LineSettings s;
  s.nominal_g = 500.0;
  s.target_g = 503.0;
  s.heads = kHeads;
  return s;
}

class NullListener final : public heft::IngestListener {
 public:
  void OnPack(std::string_view, const heft::Pack&) override { ++packs; }
  void OnProblem(const heft::RecordProblem&) override { ++problems; }
  std::int64_t packs = 0;
  std::int64_t problems = 0;
};

std::size_t HeapInUse() { return mallinfo2().uordblks; }

int RunStages(std::size_t n, const std::vector<int>& line_counts) {
  const std::vector<Sample> samples = MakeSamples(n, 20260302);
  std::vector<double> z(n);
  for (std::size_t i = 0; i < n; ++i) z[i] = (samples[i].grams - 503.0) / 1.6;

  // Records: ISO-8601 times (the costlier form) and epoch ms.
  std::vector<std::string> iso(n), epoch(n);
  for (std::size_t i = 0; i < n; ++i) {
    char t[32];
    heft::FormatTimeMs(kStartMs + 500 * static_cast<std::int64_t>(i), t);
    char buf[96];
    std::snprintf(buf, sizeof buf, "%s,oats-1,%d,%.1f", t, samples[i].head, samples[i].grams);
    iso[i] = buf;
    std::snprintf(buf, sizeof buf, "%lld,oats-1,%d,%.1f",
                  static_cast<long long>(kStartMs + 500 * static_cast<std::int64_t>(i)),
                  samples[i].head, samples[i].grams);
    epoch[i] = buf;
  }
  Print("parse_native_iso",
        NsPer(n,
              [&] {
                heft::RecordView v;
                double acc = 0.0;
                for (const auto& r : iso) {
                  heft::ParseNativeRecord(r, &v);
                  acc += v.grams;
                }
                g_sink = acc;
              }),
        "ns/record");
  Print("parse_native_epoch",
        NsPer(n,
              [&] {
                heft::RecordView v;
                double acc = 0.0;
                for (const auto& r : epoch) {
                  heft::ParseNativeRecord(r, &v);
                  acc += v.grams;
                }
                g_sink = acc;
              }),
        "ns/record");
  const std::string feed20 = MakeFeed(samples, 20);
  Print("framer_and_parse",
        NsPer(n,
              [&] {
                heft::LineFramer framer;
                heft::RecordView v;
                double acc = 0.0;
                for (std::size_t at = 0; at < feed20.size(); at += 65536) {
                  framer.Feed(
                      std::string_view(feed20).substr(at, 65536),
                      [&](std::string_view rec) {
                        heft::ParseNativeRecord(rec, &v);
                        acc += v.grams;
                      },
                      [](std::size_t) {});
                }
                g_sink = acc;
              }),
        "ns/record");

  Print("stats_rolling_moments_w500",
        NsPer(n,
              [&] {
                heft::RollingMoments m(500);
                for (const auto& s : samples) m.Add(s.grams);
                g_sink = m.Mean() + m.StdDev();
              }),
        "ns/sample");
  Print("stats_window_quartiles_w500",
        NsPer(n,
              [&] {
                heft::CountWindowStats w(500);
                double acc = 0.0;
                for (const auto& s : samples) {
                  w.Add(s.grams);
                  acc += w.moments().Mean() + w.moments().StdDev() + w.Quantile(0.25) +
                         w.Quantile(0.5) + w.Quantile(0.75);
                }
                g_sink = acc;
              }),
        "ns/sample");

  // Detectors, each on residuals z (thresholds of the order LineMonitor designs).
  Print("detect_tabular_cusum",
        NsPer(n,
              [&] {
                heft::TabularCusum c(0.5, 5.0);
                int signals = 0;
                for (std::size_t i = 0; i < n; ++i) {
                  if (c.Update(z[i], static_cast<std::int64_t>(i)) !=
                      heft::TabularCusum::Signal::kNone) {
                    ++signals;
                    c.Reset();
                  }
                }
                g_sink = signals;
              }),
        "ns/sample");
  Print("detect_ewma",
        NsPer(n,
              [&] {
                heft::EwmaChart e(0.05, 2.8);
                int signals = 0;
                for (double x : z) {
                  if (e.Update(x) != heft::EwmaChart::Signal::kNone) ++signals;
                }
                g_sink = signals;
              }),
        "ns/sample");
  Print("detect_run_rules",
        NsPer(n,
              [&] {
                heft::RunRules r(heft::RunRuleSettings::Published());
                int signals = 0;
                for (double x : z) {
                  if (r.Update(x)) ++signals;
                }
                g_sink = signals;
              }),
        "ns/sample");
  Print("detect_head_cusums",
        NsPer(n,
              [&] {
                heft::HeadCusums h(kHeads, 0.5, 6.0);
                int signals = 0;
                for (std::size_t i = 0; i < n; ++i) {
                  if (h.Update(samples[i].head, z[i], static_cast<std::int64_t>(i))) ++signals;
                }
                g_sink = signals;
              }),
        "ns/sample");
  Print("detect_log_variance_cusum",
        NsPer(n,
              [&] {
                heft::LogVarianceCusum c(5, 0.25, 6.0);
                int signals = 0;
                for (double x : z) {
                  if (c.Add(x)) ++signals;
                }
                g_sink = signals;
              }),
        "ns/sample");
  Print("detect_stuck_reading",
        NsPer(n,
              [&] {
                heft::StuckReading s(8);
                int events = 0;
                for (const auto& p : samples) {
                  if (s.Update(p.grams) != heft::StuckReading::Event::kNone) ++events;
                }
                g_sink = events;
              }),
        "ns/sample");
  {
    // The periodogram runs every cycle_every_packs packs over cycle_window_packs values.
    const heft::LineSettings defaults;
    const std::size_t window = static_cast<std::size_t>(defaults.cycle_window_packs);
    const std::size_t every = static_cast<std::size_t>(std::max(1, defaults.cycle_every_packs));
    heft::PeriodicityTest test(window);
    const std::size_t calls = std::max<std::size_t>(1, n / every / 4);
    const double per_call = NsPer(calls, [&] {
      double acc = 0.0;
      for (std::size_t c = 0; c < calls; ++c) {
        const std::size_t at = (c * every) % (n - window);
        acc += test.Evaluate(std::span<const double>(z.data() + at, window)).p_value;
      }
      g_sink = acc;
    });
    Print("detect_periodicity_per_call", per_call, "ns/call");
    Print("detect_periodicity_amortised", per_call / static_cast<double>(every), "ns/sample");
  }

  // The whole LineMonitor: baseline learning, settling fit, every detector, messages.
  Print("line_monitor_push",
        NsPer(n,
              [&] {
                heft::LineMonitor m("oats-1", BenchLine());
                std::vector<heft::Finding> out;
                std::int64_t findings = 0;
                for (std::size_t i = 0; i < n; ++i) {
                  heft::Pack p;
                  p.index = static_cast<std::int64_t>(i);
                  p.time_ms = kStartMs + 500 * static_cast<std::int64_t>(i);
                  p.grams = samples[i].grams;
                  p.head = samples[i].head;
                  out.clear();
                  m.Push(p, &out);
                  findings += static_cast<std::int64_t>(out.size());
                }
                g_sink = static_cast<double>(findings);
              }),
        "ns/sample");

  // Framing + parsing + routing + monitoring, as heftd and `heft replay` do it, as lines
  // grow. Each line pays a one-off start (baseline, settling fit, detector design from
  // exact ARLs) in its first packs; so the first 1,000 packs of every line are timed apart
  // (start cost per line) from the next 3,000 (steady cost per record).
  for (int lines : line_counts) {
    constexpr std::size_t kWarmPerLine = 1000;
    constexpr std::size_t kSteadyPerLine = 3000;
    const std::size_t warm = static_cast<std::size_t>(lines) * kWarmPerLine;
    const std::size_t steady = static_cast<std::size_t>(lines) * kSteadyPerLine;
    const std::vector<Sample> s = MakeSamples(warm + steady, 99);
    const std::string feed = MakeFeed(s, lines);
    // Split at a record boundary after the warm-up records (+1 for the header).
    std::size_t cut = 0;
    for (std::size_t r = 0; r < warm + 1; ++r) cut = feed.find('\n', cut) + 1;
    heft::PlantSettings ps;
    ps.defaults = BenchLine();
    ps.max_lines = 10000;
    heft::Plant plant(ps);
    NullListener listener;
    heft::StreamIngest ingest(plant, listener);
    std::vector<heft::Finding> out;
    auto feed_range = [&](std::size_t from, std::size_t to) {
      const double start = ThreadCpuNs();
      for (std::size_t at = from; at < to; at += 65536) {
        out.clear();
        ingest.Feed(std::string_view(feed).substr(at, std::min<std::size_t>(65536, to - at)), 0,
                    &out);
      }
      return ThreadCpuNs() - start;
    };
    const double warm_ns = feed_range(0, cut);
    const double steady_ns = feed_range(cut, feed.size());
    const double per_record = steady_ns / static_cast<double>(steady);
    const double start_ms =
        (warm_ns - per_record * static_cast<double>(warm)) / 1e6 / static_cast<double>(lines);
    char name[64];
    std::snprintf(name, sizeof name, "stream_ingest_%d_lines_steady", lines);
    Print(name, per_record, "ns/record");
    std::snprintf(name, sizeof name, "stream_ingest_%d_lines_start", lines);
    Print(name, start_ms, "ms/line");
  }

  // One detector design from ARL theory (exact: Brook & Evans CUSUM, integral-equation
  // EWMA), done once per distinct line design when a line settles. Best of three.
  {
    double best_ns = 1e18;
    for (int i = 0; i < 3; ++i) {
      const double start = ThreadCpuNs();
      const heft::DetectorDesign d = heft::DesignDetectors(1.0, 120.0, 1.0);
      best_ns = std::min(best_ns, ThreadCpuNs() - start);
      if (!d.exact) std::fprintf(stderr, "detector design fell back to approximations\n");
    }
    Print("detector_design_per_line_settle", best_ns / 1e6, "ms");
  }

  // Heap per line once every detector's buffers exist (after the baseline is learnt).
  {
    const std::size_t before = HeapInUse();
    auto plant = std::make_unique<heft::Plant>([] {
      heft::PlantSettings ps;
      ps.defaults = BenchLine();
      return ps;
    }());
    std::vector<heft::Finding> out;
    const int lines = 100;
    for (int k = 0; k < 1000; ++k) {
      for (int l = 0; l < lines; ++l) {
        char id[32];
        std::snprintf(id, sizeof id, "bench-%03d", l);
        heft::RecordView v;
        v.line = id;
        v.head = samples[static_cast<std::size_t>(k) % n].head;
        v.has_time = true;
        v.time_ms = kStartMs + 500 * k;
        v.grams = samples[static_cast<std::size_t>(k * lines + l) % n].grams;
        out.clear();
        plant->Accept(v, k * lines + l, 0, &out);
      }
    }
    Print("heap_bytes_per_line", static_cast<double>(HeapInUse() - before) / lines, "bytes");
  }
  return 0;
}

int RunSqlite(const std::string& path, std::size_t rows) {
  std::remove(path.c_str());
  std::unique_ptr<heft::SqliteStore> store;
  heft::Status st = heft::SqliteStore::Open(path, heft::SqliteStore::Mode::kReadWrite, &store);
  if (!st.ok()) {
    std::fprintf(stderr, "sqlite: %s\n", st.message().c_str());
    return 2;
  }
  const std::vector<Sample> samples = MakeSamples(rows, 7);
  constexpr std::size_t kBatch = 5000;
  std::vector<heft::SampleRow> batch;
  const std::vector<heft::EventRow> no_events;
  const double start = WallNs();
  for (std::size_t i = 0; i < rows; i += kBatch) {
    batch.clear();
    for (std::size_t j = i; j < std::min(rows, i + kBatch); ++j) {
      heft::SampleRow r;
      r.line = "bench-" + std::to_string(j % 20);
      r.source = "tcp:127.0.0.1:40000";
      r.record_index = static_cast<std::int64_t>(j);
      r.time_ms = kStartMs + 25 * static_cast<std::int64_t>(j);
      r.grams = samples[j].grams;
      r.head = samples[j].head;
      batch.push_back(std::move(r));
    }
    st = store->WriteBatch(no_events, batch);
    if (!st.ok()) {
      std::fprintf(stderr, "sqlite: %s\n", st.message().c_str());
      return 2;
    }
  }
  const double secs = (WallNs() - start) / 1e9;
  Print("sqlite_sample_rows_per_s", static_cast<double>(rows) / secs, "rows/s");
  return 0;
}

// Per line: count window mean, sd, quartiles; EWMA (lambda 0.2) of the weights; two-sided
// tabular CUSUM (k = 0.5 sigma, h = 5 sigma) with mean and sigma from the line's first
// `window` packs. The same as tools/pandas_baseline.py, which documents the choices.
struct RollingLine {
  explicit RollingLine(std::size_t window) : stats(window) {}
  heft::CountWindowStats stats;
  std::vector<double> first;  // baseline packs
  double mu = 0.0, sigma = 0.0, ewma = 0.0, cp = 0.0, cm = 0.0;
  std::int64_t n = 0, signals = 0;
  double last_mean = 0, last_sd = 0, last_q1 = 0, last_median = 0, last_q3 = 0;
};

int RunRolling(const std::string& path, std::size_t window) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    std::fprintf(stderr, "rolling: cannot read %s\n", path.c_str());
    return 2;
  }
  const double start = ThreadCpuNs();
  std::map<std::string, RollingLine, std::less<>> lines;
  heft::LineFramer framer;
  std::int64_t records = 0;
  constexpr double kLambda = 0.2;
  auto on_record = [&](std::string_view text) {
    heft::RecordView v;
    if (!heft::ParseNativeRecord(text, &v).ok()) return;
    ++records;
    auto it = lines.find(v.line);
    if (it == lines.end()) it = lines.emplace(std::string(v.line), RollingLine(window)).first;
    RollingLine& l = it->second;
    const double x = v.grams;
    l.stats.Add(x);
    l.ewma = l.n == 0 ? x : kLambda * x + (1.0 - kLambda) * l.ewma;
    ++l.n;
    if (l.stats.count() == window) {
      l.last_mean = l.stats.moments().Mean();
      l.last_sd = l.stats.moments().StdDev();
      l.last_q1 = l.stats.Quantile(0.25);
      l.last_median = l.stats.Quantile(0.5);
      l.last_q3 = l.stats.Quantile(0.75);
    }
    if (l.n <= static_cast<std::int64_t>(window)) {
      l.first.push_back(x);
      if (l.n == static_cast<std::int64_t>(window)) {
        double s = 0, ss = 0;
        for (double f : l.first) s += f;
        l.mu = s / static_cast<double>(window);
        for (double f : l.first) ss += (f - l.mu) * (f - l.mu);
        l.sigma = std::sqrt(ss / static_cast<double>(window - 1));
      }
      return;
    }
    const double zz = (x - l.mu) / l.sigma;
    l.cp = std::max(0.0, l.cp + zz - 0.5);
    l.cm = std::max(0.0, l.cm - zz - 0.5);
    if (l.cp > 5.0 || l.cm > 5.0) {
      ++l.signals;
      l.cp = l.cm = 0.0;
    }
  };
  std::vector<char> buf(1 << 20);
  while (in) {
    in.read(buf.data(), static_cast<std::streamsize>(buf.size()));
    const std::size_t got = static_cast<std::size_t>(in.gcount());
    if (got == 0) break;
    framer.Feed(std::string_view(buf.data(), got), on_record, [](std::size_t) {});
  }
  framer.Finish(on_record, [](std::size_t) {});
  const double secs = (ThreadCpuNs() - start) / 1e9;
  std::printf("{\"records\": %lld, \"cpu_s\": %.6f, \"lines\": {", static_cast<long long>(records),
              secs);
  bool first = true;
  for (const auto& [id, l] : lines) {
    std::printf(
        "%s\"%s\": {\"mean\": %.6f, \"sd\": %.6f, \"q1\": %.6f, \"median\": %.6f, "
        "\"q3\": %.6f, \"ewma\": %.6f, \"cusum_signals\": %lld}",
        first ? "" : ", ", id.c_str(), l.last_mean, l.last_sd, l.last_q1, l.last_median, l.last_q3,
        l.ewma, static_cast<long long>(l.signals));
    first = false;
  }
  std::printf("}}\n");
  return 0;
}

}  // namespace

int main(int argc, char** argv) {
  const std::string mode = argc > 1 ? argv[1] : "stages";
  if (mode == "stages") {
    const std::size_t n = argc > 2 ? std::strtoull(argv[2], nullptr, 10) : 1000000;
    std::vector<int> line_counts;
    for (const char* p = argc > 3 ? argv[3] : "1,20,200"; *p;) {
      char* end = nullptr;
      const long v = std::strtol(p, &end, 10);
      if (end == p) break;
      if (v > 0) line_counts.push_back(static_cast<int>(v));
      p = *end == ',' ? end + 1 : end;
    }
    return RunStages(std::max<std::size_t>(n, 10000), line_counts);
  }
  if (mode == "sqlite" && argc > 3) return RunSqlite(argv[2], std::strtoull(argv[3], nullptr, 10));
  if (mode == "rolling" && argc > 3) {
    return RunRolling(argv[2], std::max<std::size_t>(2, std::strtoull(argv[3], nullptr, 10)));
  }
  std::fprintf(stderr,
               "usage: heft_pipeline_bench stages [SAMPLES [LINES,...]] | sqlite DB ROWS | "
               "rolling FEED WINDOW\n");
  return 2;
}
