// heft stats — the statistics engine's figures for a recorded feed, per line (and per
// filler head with --by-head): moments, quartiles, box plot, histogram, runs test, head
// ANOVA and, given limits, capability.
//
// usage: heft stats FEED.csv [--line L] [--window N | --minutes T] [--by-head]
//                   [--quantile-type 6|7] [--bins sqrt|sturges|scott|fd|WIDTH]
//                   [--lsl G] [--usl G] [--format table|json]
//
// FEED is native CSV (core/record/native_record.h; - for stdin). Packs with status
// `error` are left out (their weight is not to be trusted) and counted; rejected packs
// count (they were weighed). Records without a time take the latest time seen (0 before
// any), as in `heft replay`. Over the whole feed unless a window is given: --window N
// keeps the last N packs of each line, --minutes T the packs of each line's last T minutes
// (time > last − T). The line figures then come from the sliding-window engine
// (CountWindowStats / TimeWindowStats) run over the whole feed; head figures, box plot,
// histogram and runs test from that window's packs.
//
// JSON (--format json): one document, keys in this order (stable; new keys only appended):
// {
//   "source": {"feed": str, "records": int, "accepted": int, "malformed": int,
//              "excluded_error": int},
//   "window": {"kind": "all" | "count" | "minutes", "size": number | null},
//   "quantile_type": 6 | 7,
//   "groups": [ {                       // one per line, then (--by-head) one per line+head
//     "line": str, "head": int | null,  // null: the whole line
//     "count", "mean", "sd", "min", "max", "range", "q1", "median", "q3",
//     "mr_sigma",                       // mean moving range / d2(2) (2/√π)
//     "skewness", "kurtosis",           // bias-corrected G1, excess G2; null when undefined
//     "box_plot": {"q1", "median", "q3", "iqr", "lower_fence", "upper_fence",
//                  "lower_outer_fence", "upper_outer_fence", "lower_whisker",
//                  "upper_whisker", "outlier_count", "far_out_count",
//                  "outliers": [...]}       // ascending, at most 100 listed
//     "histogram": {"rule", "raw_bins", "raw_width", "width", "edges": [...],
//                   "counts": [...], "shape", "skewness", "skewness_se", "kurtosis",
//                   "bimodality", "peaks"},
//     "runs_test": {"centre", "used", "above", "below", "on_centre", "runs",
//                   "expected_runs", "variance", "z", "longest_run", "exact",
//                   "p_fewer", "p_more", "p_two_sided"},
//     "capability": null | {"lower_limit", "upper_limit", "sigma_within",
//                   "sigma_overall", "cp", "cpk", "cpl", "cpu", "pp", "ppk", "ppl", "ppu"},
//     "head_anova": null | {"heads": [{"head", "count", "mean", "sd", "offset"}...],
//                   "f", "df_between", "df_within", "p_value", "farthest": [int...]}
//   } ... ]
// }
// Undefined figures are null. head_anova is given for line groups whose packs name two or
// more heads. Capability figures are the packer's own control, not legal verification.
// Exit: 0 done, 2 usage or file error (also when --line names a line with no packs).
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <fstream>
#include <iomanip>
#include <iostream>
#include <map>
#include <nlohmann/json.hpp>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include "command.h"
#include "core/model/pack.h"
#include "core/record/line_framer.h"
#include "core/record/native_record.h"
#include "core/stats/box_plot.h"
#include "core/stats/capability.h"
#include "core/stats/count_window_stats.h"
#include "core/stats/head_comparison.h"
#include "core/stats/histogram.h"
#include "core/stats/runs_test.h"
#include "core/stats/stats_types.h"
#include "core/stats/time_window_stats.h"
#include "core/stats/window_summary.h"

namespace heft::cli {
namespace {

using Json = nlohmann::ordered_json;

constexpr int kMaxProblemsShown = 20;
constexpr std::size_t kMaxOutliersListed = 100;

struct Sample {
  std::int64_t time_ms;
  double grams;
  int head;
};

struct Options {
  std::string feed;
  std::string line;
  std::optional<std::size_t> window;
  std::optional<double> minutes;
  bool by_head = false;
  QuantileType type = QuantileType::kType7;
  HistogramOptions bins;
  std::optional<double> lsl, usl;
  bool json = false;
};

struct Counters {
  std::int64_t records = 0;
  std::int64_t accepted = 0;
  std::int64_t malformed = 0;
  std::int64_t excluded_error = 0;
};

void Help(std::ostream& out) {
  out << "usage: heft stats FEED.csv [--line L] [--window N | --minutes T] [--by-head]\n"
         "                  [--quantile-type 6|7] [--bins sqrt|sturges|scott|fd|WIDTH]\n"
         "                  [--lsl G] [--usl G] [--format table|json]\n"
         "  Statistics of a recorded native feed (- for stdin), per line and per head:\n"
         "  moments, quartiles, box plot, histogram, runs test, head ANOVA, capability.\n"
         "  --window N       last N packs of each line (default: the whole feed)\n"
         "  --minutes T      packs of each line's last T minutes\n"
         "  --by-head        also one group per filler head\n"
         "  --quantile-type  Hyndman & Fan type 7 (default, numpy 'linear') or 6 ('weibull')\n"
         "  --bins           histogram rule (default sqrt, kept to 5..12 cells) or a width in g\n"
         "  --lsl/--usl      limits for capability, e.g. --lsl 485 (nominal 500 g − TNE 15 g)\n"
         "  --format         table (default) or json (schema at the top of stats_command.cpp)\n";
}

std::optional<double> ParseNumber(const std::string& text) {
  if (text.empty()) return std::nullopt;
  char* end = nullptr;
  const double v = std::strtod(text.c_str(), &end);
  if (end != text.c_str() + text.size() || !std::isfinite(v)) return std::nullopt;
  return v;
}

// Returns "" on success, else the usage error.
std::string ParseOptions(const Args& args, Options* o, bool* help) {
  ArgReader reader(args);
  std::string window, minutes, qtype, format, bins, lsl, usl;
  while (!reader.Done()) {
    if (reader.Flag("--help") || reader.Flag("-h")) {
      *help = true;
      return "";
    }
    if (reader.Flag("--by-head")) {
      o->by_head = true;
      continue;
    }
    if (reader.Option("--line", &o->line) || reader.Option("--window", &window) ||
        reader.Option("--minutes", &minutes) || reader.Option("--quantile-type", &qtype) ||
        reader.Option("--format", &format) || reader.Option("--bins", &bins) ||
        reader.Option("--lsl", &lsl) || reader.Option("--usl", &usl)) {
      continue;
    }
    if (!reader.error.empty()) return reader.error;
    if (reader.Peek().rfind("--", 0) == 0 || !o->feed.empty()) {
      return "unexpected argument '" + reader.Peek() + "'";
    }
    o->feed = reader.Take();
  }
  if (!reader.error.empty()) return reader.error;
  if (o->feed.empty()) return "a FEED file is required";
  if (!window.empty() && !minutes.empty()) return "--window and --minutes exclude each other";
  if (!window.empty()) {
    const auto n = ParseNumber(window);
    if (!n || *n < 2 || *n != std::floor(*n) || *n > 1e8) {
      return "--window: a whole number of packs from 2 is needed, got '" + window + "'";
    }
    o->window = static_cast<std::size_t>(*n);
  }
  if (!minutes.empty()) {
    const auto t = ParseNumber(minutes);
    if (!t || *t <= 0.0 || *t > 1e7)
      return "--minutes: a positive number is needed, got '" + minutes + "'";
    o->minutes = *t;
  }
  if (!qtype.empty()) {
    if (qtype == "6") {
      o->type = QuantileType::kType6;
    } else if (qtype != "7") {
      return "--quantile-type: 6 or 7, got '" + qtype + "'";
    }
  }
  if (!format.empty()) {
    if (format == "json") {
      o->json = true;
    } else if (format != "table") {
      return "--format: table or json, got '" + format + "'";
    }
  }
  if (!bins.empty()) {
    if (bins == "sqrt") {
      o->bins.rule = BinRule::kSquareRoot;
    } else if (bins == "sturges") {
      o->bins.rule = BinRule::kSturges;
    } else if (bins == "scott") {
      o->bins.rule = BinRule::kScott;
    } else if (bins == "fd") {
      o->bins.rule = BinRule::kFreedmanDiaconis;
    } else {
      const auto w = ParseWeightGrams(bins);
      if (!w || *w <= 0.0) return "--bins: sqrt, sturges, scott, fd or a width, got '" + bins + "'";
      o->bins.rule = BinRule::kFixedWidth;
      o->bins.fixed_width = *w;
    }
  }
  for (auto [text, target, name] :
       {std::tuple{&lsl, &o->lsl, "--lsl"}, std::tuple{&usl, &o->usl, "--usl"}}) {
    if (text->empty()) continue;
    const auto g = ParseWeightGrams(*text);
    if (!g) return std::string(name) + ": not a weight: '" + *text + "'";
    *target = *g;
  }
  if (o->lsl && o->usl && *o->lsl >= *o->usl) return "--lsl must be below --usl";
  return "";
}

// Reads the feed into per-line samples (map: lines come out sorted by name).
bool ReadFeed(const Options& o, std::map<std::string, std::vector<Sample>>* lines, Counters* c,
              std::ostream& err) {
  std::ifstream file;
  std::istream* in = &std::cin;
  if (o.feed != "-") {
    file.open(o.feed, std::ios::binary);
    if (!file) {
      err << "heft stats: " << o.feed << ": cannot open\n";
      return false;
    }
    in = &file;
  }
  LineFramer framer;
  bool header_allowed = true;
  std::int64_t last_time = 0;
  int shown = 0;
  auto problem = [&](std::int64_t index, std::string_view what, int field, std::string_view text) {
    ++c->malformed;
    if (shown++ < kMaxProblemsShown) {
      err << o.feed << ": record #" << index << ": " << what
          << (field >= 0 ? " in field " + std::to_string(field + 1) : "");
      if (!text.empty()) err << ": '" << text.substr(0, 80) << "'";
      err << "\n";
    }
  };
  auto on_record = [&](std::string_view text) {
    if (header_allowed) {
      header_allowed = false;
      if (IsNativeHeader(text)) return;
    }
    RecordView record;
    const RecordParse parse = ParseNativeRecord(text, &record);
    if (!parse.ok() && parse.error == RecordError::kEmpty) return;  // blank: not a record
    const std::int64_t index = c->records++;
    if (!parse.ok()) {
      problem(index, RecordErrorName(parse.error), parse.field, text);
      return;
    }
    if (record.has_time) last_time = record.time_ms;
    if (!o.line.empty() && record.line != o.line) return;
    if (record.status == PackStatus::kError) {
      ++c->excluded_error;
      return;
    }
    ++c->accepted;
    (*lines)[std::string(record.line)].push_back(
        Sample{record.has_time ? record.time_ms : last_time, record.grams, record.head});
  };
  auto on_too_long = [&](std::size_t bytes) {
    header_allowed = false;
    std::string detail = "(";  // piecewise: GCC 12 warns falsely on "(" + std::string
    detail += std::to_string(bytes);
    detail += " bytes)";
    problem(c->records++, RecordErrorName(RecordError::kTooLong), -1, detail);
  };
  std::vector<char> chunk(1 << 16);
  while (*in) {
    in->read(chunk.data(), static_cast<std::streamsize>(chunk.size()));
    const std::streamsize got = in->gcount();
    if (got <= 0) break;
    framer.Feed(std::string_view(chunk.data(), static_cast<std::size_t>(got)), on_record,
                on_too_long);
  }
  if (in->bad()) {
    err << "heft stats: " << o.feed << ": read error\n";
    return false;
  }
  framer.Finish(on_record, on_too_long);
  if (shown > kMaxProblemsShown) {
    err << o.feed << ": " << (shown - kMaxProblemsShown) << " more bad records not shown\n";
  }
  return true;
}

Json Opt(const std::optional<double>& v) {
  return v && std::isfinite(*v) ? Json(*v) : Json(nullptr);
}
Json Num(double v) { return std::isfinite(v) ? Json(v) : Json(nullptr); }

struct Group {
  std::string line;
  int head = kNoHead;  // kNoHead: the whole line
  WindowSummary summary;
  BoxPlotData box;
  HistogramData histogram;
  RunsTestResult runs;
  std::optional<CapabilityData> capability;
  std::optional<HeadComparison> heads;
};

Group Analyse(const std::string& line, int head, const std::vector<double>& in_order,
              const std::optional<WindowSummary>& summary, const Options& o) {
  Group g;
  g.line = line;
  g.head = head;
  g.summary = summary ? *summary : SummarizeSeries(in_order, o.type);
  std::vector<double> sorted(in_order);
  std::sort(sorted.begin(), sorted.end());
  g.box = ComputeBoxPlot(sorted, o.type);
  g.histogram = ComputeHistogram(sorted, o.bins);
  g.runs = RunChart(in_order, CentreLine::kMedian);
  if (o.lsl || o.usl) g.capability = ComputeCapability(g.summary, o.lsl, o.usl);
  return g;
}

Json GroupJson(const Group& g) {
  const WindowSummary& s = g.summary;
  Json j;
  j["line"] = g.line;
  j["head"] = g.head == kNoHead ? Json(nullptr) : Json(g.head);
  j["count"] = s.count;
  j["mean"] = Num(s.mean);
  j["sd"] = Num(s.sd);
  j["min"] = Num(s.min);
  j["max"] = Num(s.max);
  j["range"] = Num(s.range);
  j["q1"] = Num(s.q1);
  j["median"] = Num(s.median);
  j["q3"] = Num(s.q3);
  j["mr_sigma"] = Num(s.mr_sigma);
  j["skewness"] = Opt(s.skewness);
  j["kurtosis"] = Opt(s.kurtosis);
  const BoxPlotData& b = g.box;
  Json box;
  box["q1"] = Num(b.q1);
  box["median"] = Num(b.median);
  box["q3"] = Num(b.q3);
  box["iqr"] = Num(b.iqr);
  box["lower_fence"] = Num(b.lower_fence);
  box["upper_fence"] = Num(b.upper_fence);
  box["lower_outer_fence"] = Num(b.lower_outer_fence);
  box["upper_outer_fence"] = Num(b.upper_outer_fence);
  box["lower_whisker"] = Num(b.lower_whisker);
  box["upper_whisker"] = Num(b.upper_whisker);
  box["outlier_count"] = b.outliers.size();
  box["far_out_count"] = b.far_out;
  Json outliers = Json::array();
  for (std::size_t i = 0; i < b.outliers.size() && i < kMaxOutliersListed; ++i) {
    outliers.push_back(b.outliers[i]);
  }
  box["outliers"] = outliers;
  j["box_plot"] = box;
  const HistogramData& h = g.histogram;
  Json hist;
  hist["rule"] = BinRuleName(h.rule);
  hist["raw_bins"] = h.raw_bins;
  hist["raw_width"] = Num(h.raw_width);
  hist["width"] = Num(h.width);
  hist["edges"] = h.edges;
  hist["counts"] = h.counts;
  hist["shape"] = HistogramShapeName(h.shape);
  hist["skewness"] = Opt(h.skewness);
  hist["skewness_se"] = Opt(h.skewness_se);
  hist["kurtosis"] = Opt(h.kurtosis);
  hist["bimodality"] = Opt(h.bimodality);
  hist["peaks"] = h.peaks;
  j["histogram"] = hist;
  const RunsTestResult& r = g.runs;
  Json runs;
  runs["centre"] = Num(r.centre);
  runs["used"] = r.used;
  runs["above"] = r.above;
  runs["below"] = r.below;
  runs["on_centre"] = r.on_centre;
  runs["runs"] = r.runs;
  runs["expected_runs"] = Num(r.expected_runs);
  runs["variance"] = Num(r.variance);
  runs["z"] = Opt(r.z);
  runs["longest_run"] = r.longest_run;
  runs["exact"] = r.exact;
  runs["p_fewer"] = Opt(r.p_fewer);
  runs["p_more"] = Opt(r.p_more);
  runs["p_two_sided"] = Opt(r.p_two_sided);
  j["runs_test"] = runs;
  if (g.capability) {
    const CapabilityData& c = *g.capability;
    Json cap;
    cap["lower_limit"] = Opt(c.lower_limit);
    cap["upper_limit"] = Opt(c.upper_limit);
    cap["sigma_within"] = Num(c.sigma_within);
    cap["sigma_overall"] = Num(c.sigma_overall);
    using Index = std::pair<const char*, std::optional<double>>;
    for (const Index& index :
         {Index{"cp", c.cp}, Index{"cpk", c.cpk}, Index{"cpl", c.cpl}, Index{"cpu", c.cpu},
          Index{"pp", c.pp}, Index{"ppk", c.ppk}, Index{"ppl", c.ppl}, Index{"ppu", c.ppu}}) {
      cap[index.first] = Opt(index.second);
    }
    j["capability"] = cap;
  } else {
    j["capability"] = nullptr;
  }
  if (g.heads) {
    const HeadComparison& hc = *g.heads;
    Json anova;
    Json heads = Json::array();
    for (const HeadFigures& f : hc.heads) {
      Json row;
      row["head"] = f.head;
      row["count"] = f.count;
      row["mean"] = Num(f.mean);
      row["sd"] = Num(f.sd);
      row["offset"] = Num(f.offset);
      heads.push_back(row);
    }
    anova["heads"] = heads;
    anova["f"] = Opt(hc.f);
    anova["df_between"] = hc.df_between;
    anova["df_within"] = hc.df_within;
    anova["p_value"] = Opt(hc.p_value);
    anova["farthest"] = hc.farthest;
    j["head_anova"] = anova;
  } else {
    j["head_anova"] = nullptr;
  }
  return j;
}

std::string Fixed(double v, int digits = 3) {
  if (!std::isfinite(v)) return "-";
  std::ostringstream s;
  s << std::fixed << std::setprecision(digits) << v;
  return s.str();
}
std::string Fixed(const std::optional<double>& v, int digits = 3) {
  return v ? Fixed(*v, digits) : std::string("-");
}

void GroupTable(const Group& g, std::ostream& out) {
  const WindowSummary& s = g.summary;
  out << "line " << g.line;
  if (g.head != kNoHead) out << "  head " << g.head;
  out << "  n " << s.count << "\n";
  out << "  mean " << Fixed(s.mean) << "  sd " << Fixed(s.sd) << "  short-term sigma (MR/d2) "
      << Fixed(s.mr_sigma) << "\n";
  out << "  min " << Fixed(s.min) << "  Q1 " << Fixed(s.q1) << "  median " << Fixed(s.median)
      << "  Q3 " << Fixed(s.q3) << "  max " << Fixed(s.max) << "  (quantile type "
      << static_cast<int>(s.quantile_type) << ")\n";
  out << "  skewness " << Fixed(s.skewness) << "  excess kurtosis " << Fixed(s.kurtosis) << "\n";
  const BoxPlotData& b = g.box;
  out << "  box plot: whiskers " << Fixed(b.lower_whisker) << " .. " << Fixed(b.upper_whisker)
      << ", fences " << Fixed(b.lower_fence) << " / " << Fixed(b.upper_fence) << ", "
      << b.outliers.size() << " outside (" << b.far_out << " beyond 3 IQR)\n";
  const HistogramData& h = g.histogram;
  out << "  histogram (" << BinRuleName(h.rule) << ", width " << Fixed(h.width, 4)
      << " g): " << HistogramShapeName(h.shape) << " (skewness " << Fixed(h.skewness, 2)
      << ", bimodality " << Fixed(h.bimodality, 3) << ", " << h.peaks << " peak"
      << (h.peaks == 1 ? "" : "s") << ")\n";
  std::size_t top = 1;
  for (std::size_t c : h.counts) top = std::max(top, c);
  if (h.counts.size() <= 40) {
    for (std::size_t i = 0; i < h.counts.size(); ++i) {
      const std::size_t bar = (h.counts[i] * 40 + top - 1) / top;
      out << "    " << std::setw(12) << Fixed(h.edges[i], 3) << " | " << std::string(bar, '#')
          << std::string(40 - bar, ' ') << " " << h.counts[i] << "\n";
    }
  }
  const RunsTestResult& r = g.runs;
  out << "  runs about the median " << Fixed(r.centre) << ": " << r.runs << " runs (expected "
      << Fixed(r.expected_runs, 1) << "), longest " << r.longest_run << ", " << r.on_centre
      << " on the median dropped; p(too few) " << Fixed(r.p_fewer, 4) << ", p(too many) "
      << Fixed(r.p_more, 4) << (r.exact ? " (exact)" : " (normal approx.)") << "\n";
  if (g.capability) {
    const CapabilityData& c = *g.capability;
    out << "  capability (packer's own control, not legal verification): limits "
        << Fixed(c.lower_limit) << " / " << Fixed(c.upper_limit) << ", sigma within "
        << Fixed(c.sigma_within) << ", overall " << Fixed(c.sigma_overall) << "\n"
        << "    Cp " << Fixed(c.cp) << "  Cpk " << Fixed(c.cpk) << "  Cpl " << Fixed(c.cpl)
        << "  Cpu " << Fixed(c.cpu) << "  Pp " << Fixed(c.pp) << "  Ppk " << Fixed(c.ppk)
        << "  Ppl " << Fixed(c.ppl) << "  Ppu " << Fixed(c.ppu) << "\n";
  }
  if (g.heads) {
    const HeadComparison& hc = *g.heads;
    out << "  heads: F " << Fixed(hc.f) << " (" << hc.df_between << ", " << hc.df_within << "), p "
        << Fixed(hc.p_value, 4) << "; farthest from the line mean:";
    for (int head : hc.farthest) {
      for (const HeadFigures& f : hc.heads) {
        if (f.head == head)
          out << " " << head << " (" << (f.offset >= 0 ? "+" : "") << Fixed(f.offset) << " g)";
      }
    }
    out << "\n";
  }
  out << "\n";
}

int RunStats(const Args& args, std::ostream& out, std::ostream& err) {
  Options o;
  bool help = false;
  const std::string usage_error = ParseOptions(args, &o, &help);
  if (help) {
    Help(out);
    return 0;
  }
  if (!usage_error.empty()) {
    err << "heft stats: " << usage_error << "\n";
    Help(err);
    return 2;
  }
  std::map<std::string, std::vector<Sample>> lines;
  Counters counters;
  if (!ReadFeed(o, &lines, &counters, err)) return 2;
  if (!o.line.empty() && lines.empty()) {
    err << "heft stats: no packs for line '" << o.line << "' in " << o.feed << "\n";
    return 2;
  }

  std::vector<Group> groups;
  for (const auto& [line, samples] : lines) {
    // The window's packs, oldest first, and the line summary from the window engine.
    std::vector<Sample> window;
    std::optional<WindowSummary> summary;
    if (o.window) {
      CountWindowStats stats(*o.window);
      for (const Sample& s : samples) stats.Add(s.grams);
      summary = stats.Summary(o.type);
      const std::size_t keep = std::min(samples.size(), *o.window);
      window.assign(samples.end() - static_cast<std::ptrdiff_t>(keep), samples.end());
    } else if (o.minutes) {
      const auto span_ms = static_cast<std::int64_t>(std::llround(*o.minutes * 60000.0));
      TimeWindowStats stats(span_ms);
      std::vector<std::int64_t> effective;  // times as the window sees them (never going back)
      for (const Sample& s : samples) {
        stats.Add(s.time_ms, s.grams);
        effective.push_back(stats.now_ms());
      }
      summary = stats.Summary(o.type);
      for (std::size_t i = 0; i < samples.size(); ++i) {
        if (effective[i] > stats.now_ms() - stats.span_ms()) window.push_back(samples[i]);
      }
    } else {
      window = samples;
    }
    std::vector<double> values;
    std::map<int, std::vector<double>> by_head;
    for (const Sample& s : window) {
      if (!std::isfinite(s.grams)) continue;
      values.push_back(s.grams);
      if (s.head != kNoHead) by_head[s.head].push_back(s.grams);
    }
    if (values.empty()) continue;
    Group g = Analyse(line, kNoHead, values, summary, o);
    if (by_head.size() >= 2) {
      std::vector<HeadMoments> heads;
      for (const auto& [head, v] : by_head) {
        HeadMoments hm;
        hm.head = head;
        for (double x : v) hm.moments.Add(x);
        heads.push_back(hm);
      }
      g.heads = CompareHeads(heads);
    }
    groups.push_back(std::move(g));
    if (o.by_head) {
      for (const auto& [head, v] : by_head)
        groups.push_back(Analyse(line, head, v, std::nullopt, o));
    }
  }

  if (o.json) {
    Json doc;
    doc["source"] = {{"feed", o.feed},
                     {"records", counters.records},
                     {"accepted", counters.accepted},
                     {"malformed", counters.malformed},
                     {"excluded_error", counters.excluded_error}};
    Json window;
    window["kind"] = o.window ? "count" : (o.minutes ? "minutes" : "all");
    window["size"] = o.window ? Json(*o.window) : (o.minutes ? Json(*o.minutes) : Json(nullptr));
    doc["window"] = window;
    doc["quantile_type"] = static_cast<int>(o.type);
    Json list = Json::array();
    for (const Group& g : groups) list.push_back(GroupJson(g));
    doc["groups"] = list;
    out << doc.dump(2) << "\n";
  } else {
    out << o.feed << ": " << counters.records << " records, " << counters.accepted
        << " packs used, " << counters.malformed << " malformed, " << counters.excluded_error
        << " weighing errors left out; window: "
        << (o.window ? "last " + std::to_string(*o.window) + " packs"
                     : (o.minutes ? "last " + Fixed(*o.minutes, 1) + " min" : "whole feed"))
        << "\n\n";
    for (const Group& g : groups) GroupTable(g, out);
  }
  return 0;
}

}  // namespace

HEFT_COMMAND("stats", "statistics of a recorded feed per line/head (moments, quartiles, charts)",
             RunStats);

}  // namespace heft::cli
