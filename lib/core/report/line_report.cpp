// line_report.cpp — report charts and the HTML page around them.
#include "core/report/line_report.h"

#include <algorithm>
#include <cmath>
#include <span>

#include "core/chart/box_plot_chart.h"
#include "core/chart/histogram_chart.h"
#include "core/chart/nice_ticks.h"
#include "core/chart/palette.h"
#include "core/chart/run_chart.h"
#include "core/chart/svg_writer.h"
#include "core/report/period_summary.h"
#include "core/stats/histogram.h"

namespace heft {
namespace {

using chart::EscapeXml;
using chart::FormatNumber;

std::string Num(double value, int decimals) { return FormatNumber(value, decimals); }
std::string Opt(const std::optional<double>& value, int decimals) {
  return value ? FormatNumber(*value, decimals) : std::string("–");
}

std::string TimeText(const ReportInput& in, std::int64_t ms) {
  return chart::FormatDateTime(ms, in.offset_minutes, true);
}

std::string EventLabel(const Finding& f) {
  std::string label(KindName(f.kind));
  if (f.head) label += " head " + std::to_string(*f.head);
  return label;
}

std::string LotLabel(const LotReport& lot) {
  std::string label = lot.lot_id;
  if (label.rfind(lot.line + " ", 0) == 0) label = label.substr(lot.line.size() + 1);
  return label.empty() ? "#" + std::to_string(lot.seq) : label;
}

std::vector<chart::RefLine> LimitLines(const ReportInput& in, bool with_t2) {
  std::vector<chart::RefLine> refs;
  if (!in.limits) return refs;
  const comply::NetContentLimits& l = *in.limits;
  refs.push_back(
      {l.nominal_g, "nominal " + Num(l.nominal_g, 1) + " g", "ref-nominal", chart::kNominal, ""});
  refs.push_back(
      {l.t1_g, "T1 = nominal − TNE " + Num(l.t1_g, 1) + " g", "ref-t1", chart::kLimit, "8 4"});
  if (with_t2 && l.t2_g) {
    refs.push_back({*l.t2_g, "T2 = nominal − 2 TNE " + Num(*l.t2_g, 1) + " g", "ref-t2",
                    chart::kSevere, "10 3 2 3"});
  }
  return refs;
}

std::vector<chart::TimeSpan> SettlingSpans(const ReportInput& in) {
  std::vector<chart::TimeSpan> spans;
  const std::int64_t range_start =
      in.from_ms ? *in.from_ms : (in.samples.empty() ? 0 : in.samples.front().time_ms);
  const std::int64_t range_end =
      in.to_ms ? *in.to_ms : (in.samples.empty() ? 0 : in.samples.back().time_ms);
  // A plain flag and value rather than std::optional: GCC 12 warns falsely
  // (-Wmaybe-uninitialized) on the optional's value once this is inlined.
  bool open = false;
  std::int64_t open_ms = 0;
  for (const HistoryEvent& e : in.events) {
    if (e.finding.kind != FindingKind::kSettling) continue;
    if (e.finding.transition == Transition::kRaised) {
      if (!open) open_ms = e.finding.onset_time_ms.value_or(e.finding.at_time_ms);
      open = true;
    } else {
      spans.push_back({open ? open_ms : range_start, e.finding.at_time_ms});
      open = false;
    }
  }
  if (open) spans.push_back({open_ms, std::max(range_end, open_ms)});
  return spans;
}

std::vector<LotRange> LotRanges(const ReportInput& in) {
  std::vector<LotRange> ranges;
  for (const LotReport& lot : in.lots) {
    ranges.push_back({LotLabel(lot), lot.figures.first_time_ms, lot.figures.last_time_ms});
  }
  return ranges;
}

std::string ZoneTitle(const ReportInput& in) { return "time (" + in.zone_name + ")"; }

std::string RunChartSvg(const ReportInput& in, const PeriodSummary& summary) {
  chart::RunChartInput run;
  run.title = "Run chart — " + in.line.line + " (" + std::to_string(summary.packs) + " packs)";
  run.x_title = ZoneTitle(in);
  run.offset_minutes = in.offset_minutes;
  run.from_ms = in.from_ms;
  run.to_ms = in.to_ms;
  run.points.reserve(in.samples.size());
  for (const HistorySample& s : in.samples) run.points.push_back({s.time_ms, s.grams, s.status});
  if (summary.stats.count >= 2 && summary.stats.mr_sigma > 0.0) {
    run.centre = summary.stats.mean;
    run.sigma = summary.stats.mr_sigma;
  }
  run.refs = LimitLines(in, false);
  run.settling = SettlingSpans(in);
  for (const HistoryEvent& e : in.events) {
    if (e.finding.kind == FindingKind::kSettling) continue;  // shown as hatching
    run.events.push_back({e.finding.at_time_ms, EventLabel(e.finding),
                          static_cast<int>(e.finding.severity),
                          e.finding.transition == Transition::kCleared});
  }
  return chart::RenderRunChart(run);
}

std::string HistogramSvg(const ReportInput& in) {
  std::vector<double> values;
  for (const HistorySample& s : in.samples) {
    if (s.status == 0) values.push_back(s.grams);
  }
  std::sort(values.begin(), values.end());
  chart::HistogramChartInput input;
  input.title = "Histogram — " + in.line.line + " (" + std::to_string(values.size()) + " ok packs)";
  // Freedman–Diaconis for larger samples (robust to outliers, fine bins for a
  // day of packs); the square-root rule for small ones or when the IQR is 0.
  HistogramOptions options;
  options.rule = values.size() >= 200 ? BinRule::kFreedmanDiaconis : BinRule::kSquareRoot;
  input.histogram = ComputeHistogram(values, options);
  if (options.rule == BinRule::kFreedmanDiaconis && input.histogram.counts.size() < 5) {
    options.rule = BinRule::kSquareRoot;
    input.histogram = ComputeHistogram(values, options);
  }
  const HistogramData& h = input.histogram;
  const char* rule_name = options.rule == BinRule::kFreedmanDiaconis
                              ? "Freedman–Diaconis rule (width 2 IQR n^−1/3)"
                              : "square-root rule (common practice)";
  if (h.count > 0) {
    input.rule_text = std::string("Bins: ") + rule_name +
                      ", width rounded up to 1-2-5: " + std::to_string(h.counts.size()) +
                      " bins of " + Num(h.width, 3) + " g. Shape: " + HistogramShapeName(h.shape) +
                      ".";
  } else {
    input.rule_text = std::string("Bins: ") + rule_name + " (no packs to bin).";
  }
  input.refs = LimitLines(in, true);
  return chart::RenderHistogramChart(input);
}

std::string BoxSvg(const ReportInput& in, ReportChart which) {
  chart::BoxPlotChartInput input;
  input.refs = LimitLines(in, false);
  if (which == ReportChart::kBoxPlotHead) {
    input.title = "By filler head — " + in.line.line;
    input.x_title = "filler head";
    input.groups = GroupByHead(in.samples);
  } else if (which == ReportChart::kBoxPlotShift) {
    input.title = "By work shift — " + in.line.line;
    input.x_title = "work shift (" + in.zone_name + ")";
    input.groups = GroupByShift(in.samples, in.shifts, in.offset_minutes);
  } else {
    input.title = "By lot — " + in.line.line;
    input.x_title = "lot";
    const std::vector<LotRange> ranges = LotRanges(in);
    input.groups = GroupByLot(in.samples, ranges);
  }
  return chart::RenderBoxPlotChart(input);
}

// --- HTML ---------------------------------------------------------------

constexpr const char* kCss = R"css(
:root { color-scheme: light; }
body { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; color: #1d232b;
       margin: 24px auto; max-width: 1000px; padding: 0 16px; line-height: 1.4; }
h1 { font-size: 24px; margin: 0 0 4px; }
h2 { font-size: 18px; margin: 28px 0 8px; border-bottom: 2px solid #2b5fa8; padding-bottom: 3px; }
p.meta { color: #55606e; margin: 0 0 12px; }
table { border-collapse: collapse; margin: 6px 0 12px; font-size: 14px; }
th, td { border: 1px solid #c9cfd6; padding: 4px 8px; text-align: left; vertical-align: top; }
th { background: #eef2f7; }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
.pass { font-weight: bold; }
.pass::before { content: "✓ "; }
.fail { font-weight: bold; color: #8e2a12; }
.fail::before { content: "✗ "; }
.note { color: #55606e; font-size: 13px; }
figure { margin: 8px 0 16px; }
figure svg { width: 100%; height: auto; display: block; }
figcaption { color: #55606e; font-size: 13px; }
.keyfigures td:first-child { font-weight: bold; }
@page { size: A4; margin: 12mm; }
@media print {
  body { margin: 0; max-width: none; font-size: 11pt; }
  figure, table.keyfigures { break-inside: avoid; page-break-inside: avoid; }
  h2 { break-after: avoid; page-break-after: avoid; }
  thead { display: table-header-group; }
  tr { break-inside: avoid; }
}
)css";

void Row(std::string& html, std::string_view name, const std::string& value,
         std::string_view note = {}) {
  html += "<tr><td>";
  html += EscapeXml(name);
  html += "</td><td class=\"num\">";
  html += EscapeXml(value);
  html += "</td><td>";
  html += EscapeXml(note);
  html += "</td></tr>\n";
}

void Figure(std::string& html, const std::string& svg, std::string_view id,
            std::string_view caption) {
  html += "<figure id=\"";
  html += id;
  html += "\">\n";
  html += svg;
  html += "<figcaption>";
  html += EscapeXml(caption);
  html += "</figcaption>\n</figure>\n";
}

std::string VerdictCell(const std::vector<LotVerdict>& verdicts) {
  std::string out;
  for (const LotVerdict& v : verdicts) {
    const std::string cls = v.state == "pass" ? "pass" : v.state == "fail" ? "fail" : "";
    out += "<span class=\"" + cls + "\">" + EscapeXml(v.rule_id) + ": " + EscapeXml(v.state) +
           "</span><br/>";
  }
  return out.empty() ? "–" : out;
}

}  // namespace

std::optional<ReportChart> ReportChartFromName(std::string_view name) {
  for (ReportChart c : {ReportChart::kRun, ReportChart::kHistogram, ReportChart::kBoxPlotHead,
                        ReportChart::kBoxPlotLot, ReportChart::kBoxPlotShift}) {
    if (name == ReportChartName(c)) return c;
  }
  return std::nullopt;
}

const char* ReportChartName(ReportChart chart) {
  switch (chart) {
    case ReportChart::kRun:
      return "run";
    case ReportChart::kHistogram:
      return "histogram";
    case ReportChart::kBoxPlotHead:
      return "boxplot-head";
    case ReportChart::kBoxPlotLot:
      return "boxplot-lot";
    case ReportChart::kBoxPlotShift:
      return "boxplot-shift";
  }
  return "run";
}

std::string RenderReportChart(const ReportInput& input, ReportChart which) {
  switch (which) {
    case ReportChart::kRun:
      return RunChartSvg(input, SummarizePeriod(input.samples, input.events, input.limits));
    case ReportChart::kHistogram:
      return HistogramSvg(input);
    default:
      return BoxSvg(input, which);
  }
}

std::string RenderReportHtml(const ReportInput& in) {
  const PeriodSummary s = SummarizePeriod(in.samples, in.events, in.limits);
  std::string html;
  html.reserve(256 * 1024);
  const std::string title = "heft report — line " + in.line.line;
  html += "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n";
  html += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n";
  html += "<title>" + EscapeXml(title) + "</title>\n<style>" + std::string(kCss) +
          "</style>\n</head>\n<body>\n";
  html += "<h1>" + EscapeXml(title) + "</h1>\n";
  std::string period;
  if (in.from_ms || in.to_ms || s.packs > 0) {
    const std::int64_t from = in.from_ms.value_or(s.first_ms);
    const std::int64_t to = in.to_ms.value_or(s.last_ms);
    period = TimeText(in, from) + " to " + TimeText(in, to) + " (" + in.zone_name + ")";
  } else {
    period = "all stored data";
  }
  html += "<p class=\"meta\">" +
          EscapeXml(in.line.product.empty() ? in.line.line : in.line.product) + " · " +
          EscapeXml(period) + "<br/>Generated " + EscapeXml(in.generated) + " from " +
          EscapeXml(in.database) + "</p>\n";

  // Key figures.
  html +=
      "<h2>Key figures</h2>\n<table class=\"keyfigures\"><thead><tr><th>figure</th>"
      "<th>value</th><th>note</th></tr></thead><tbody>\n";
  Row(html, "packs stored", std::to_string(s.packs),
      std::to_string(s.ok) + " ok, " + std::to_string(s.rejected) + " rejected, " +
          std::to_string(s.errors) + " weighing errors");
  if (s.stats.count > 0) {
    Row(html, "mean (g)", Num(s.stats.mean, 3), "ok packs");
    Row(html, "standard deviation (g)", Num(s.stats.sd, 3), "sample sd, n − 1");
    Row(html, "short-term sigma (g)", Num(s.stats.mr_sigma, 3), "mean moving range / d2(2)");
    Row(html, "min / Q1 / median / Q3 / max (g)",
        Num(s.stats.min, 2) + " / " + Num(s.stats.q1, 2) + " / " + Num(s.stats.median, 2) + " / " +
            Num(s.stats.q3, 2) + " / " + Num(s.stats.max, 2),
        "quartiles: Hyndman & Fan type 7");
  }
  if (s.limits) {
    const comply::NetContentLimits& l = *s.limits;
    Row(html, "nominal / TNE (g)", Num(l.nominal_g, 1) + " / " + Num(l.tolerance_g, 2),
        in.rules_name);
    Row(html, "T1 / T2 (g)", Num(l.t1_g, 2) + " / " + Opt(l.t2_g, 2),
        "T1 = nominal − TNE, T2 = nominal − 2 TNE");
  } else {
    Row(html, "net-content limits", "–", in.limits_note);
  }
  if (s.capability) {
    Row(html, "Cpk / Ppk (lower limit T1)",
        Opt(s.capability->cpk, 2) + " / " + Opt(s.capability->ppk, 2),
        "Cpk from short-term sigma, Ppk from overall sd");
  }
  if (s.figures) {
    const comply::LotFigures& f = *s.figures;
    Row(html, "giveaway per pack (g)", Num(f.giveaway_per_pack_g, 3),
        "mean − nominal; negative = underfill");
    Row(html, "giveaway total (kg)", Num(f.giveaway_g / 1000.0, 3),
        s.giveaway_percent ? Num(*s.giveaway_percent, 2) + " % of nominal" : "");
    Row(html, "packs below T1 / T2",
        std::to_string(f.t1_count) + " / " + std::to_string(f.t2_count),
        "of the packs in the figures (rejected packs leave the line)");
  }
  Row(html, "events raised / cleared", std::to_string(s.raised) + " / " + std::to_string(s.cleared),
      "");
  html += "</tbody></table>\n";
  html +=
      "<p class=\"note\">Compliance figures are the packer's own control, not legal "
      "verification of net content.</p>\n";

  // Charts.
  html += "<h2>Run chart</h2>\n";
  Figure(html, RunChartSvg(in, s), "chart-run",
         "Packs in time order. Centre line = mean; control limits = mean ± 3 short-term sigma "
         "(individuals chart), shaded zones at ±1, 2, 3 sigma. Hatched: settling after a "
         "start. Markers at the top: events (triangle alarm, diamond warning, circle info; "
         "hollow = cleared). Long runs are drawn as the min–max band per pixel column.");
  html += "<h2>Histogram</h2>\n";
  Figure(html, HistogramSvg(in), "chart-histogram",
         "Ok packs. Solid line: nominal; dashed: T1 = nominal − TNE; dash-dot: T2 = nominal − 2 "
         "TNE.");
  html += "<h2>Box plots</h2>\n";
  Figure(html, BoxSvg(in, ReportChart::kBoxPlotHead), "chart-boxplot-head",
         "Box Q1–Q3 with the median bar; whiskers to the most extreme pack within 1.5 IQR of the "
         "box (Tukey); circles: outliers; diamonds: beyond 3 IQR.");
  Figure(html, BoxSvg(in, ReportChart::kBoxPlotShift), "chart-boxplot-shift",
         "Work shifts starting at the configured times of day (default 06:00, 14:00, 22:00 — "
         "common practice).");
  if (!in.lots.empty()) {
    Figure(html, BoxSvg(in, ReportChart::kBoxPlotLot), "chart-boxplot-lot", "One box per lot.");
  } else {
    html +=
        "<p class=\"note\">No lots are stored for this line and range, so there is no box "
        "plot by lot.</p>\n";
  }

  // Compliance per lot.
  html += "<h2>Compliance per lot</h2>\n";
  if (in.lots.empty()) {
    html += "<p class=\"note\">No lots stored for this range.</p>\n";
  } else {
    html +=
        "<table class=\"lots\"><thead><tr><th>lot</th><th>opened</th><th>packs</th>"
        "<th>mean (g)</th><th>sd (g)</th><th>below T1</th><th>below T2</th>"
        "<th>giveaway/pack (g)</th><th>verdicts</th></tr></thead><tbody>\n";
    for (const LotReport& lot : in.lots) {
      const comply::LotFigures& f = lot.figures;
      html += "<tr><td>" + EscapeXml(LotLabel(lot)) + (lot.partial ? " (partial)" : "") +
              "</td><td>" + EscapeXml(TimeText(in, lot.opened_ms)) + "</td><td class=\"num\">" +
              std::to_string(f.count) + "</td><td class=\"num\">" + Num(f.mean_g, 2) +
              "</td><td class=\"num\">" + Num(f.s_g, 3) + "</td><td class=\"num\">" +
              std::to_string(f.t1_count) + "</td><td class=\"num\">" + std::to_string(f.t2_count) +
              "</td><td class=\"num\">" + Num(f.giveaway_per_pack_g, 3) + "</td><td>" +
              VerdictCell(lot.verdicts) + "</td></tr>\n";
    }
    html += "</tbody></table>\n";
  }

  // Giveaway.
  html += "<h2>Giveaway</h2>\n";
  if (s.figures && s.limits) {
    const comply::LotFigures& f = *s.figures;
    html +=
        "<table class=\"giveaway\"><thead><tr><th>packs</th><th>mean (g)</th>"
        "<th>nominal (g)</th><th>per pack (g)</th><th>total (kg)</th><th>% of nominal</th>"
        "<th>below nominal</th></tr></thead><tbody><tr>";
    html += "<td class=\"num\">" + std::to_string(f.count) + "</td><td class=\"num\">" +
            Num(f.mean_g, 3) + "</td><td class=\"num\">" + Num(s.limits->nominal_g, 1) +
            "</td><td class=\"num\">" + Num(f.giveaway_per_pack_g, 3) + "</td><td class=\"num\">" +
            Num(f.giveaway_g / 1000.0, 3) + "</td><td class=\"num\">" + Opt(s.giveaway_percent, 2) +
            "</td><td class=\"num\">" + std::to_string(f.below_nominal) +
            "</td></tr></tbody></table>\n";
  } else {
    html += "<p class=\"note\">No giveaway figures: " + EscapeXml(in.limits_note) + "</p>\n";
  }

  // Events.
  html += "<h2>Events</h2>\n";
  if (in.events.empty()) {
    html += "<p class=\"note\">No events in this range.</p>\n";
  } else {
    html += "<table class=\"events\"><thead><tr><th>time (" + EscapeXml(in.zone_name) +
            ")</th><th>event</th><th>kind</th><th>severity</th><th>message</th></tr></thead>"
            "<tbody>\n";
    for (const HistoryEvent& e : in.events) {
      const Finding& f = e.finding;
      html += "<tr><td>" + EscapeXml(TimeText(in, f.at_time_ms)) + "</td><td>" +
              EscapeXml(TransitionName(f.transition)) + "</td><td>" + EscapeXml(EventLabel(f)) +
              "</td><td>" + EscapeXml(SeverityName(f.severity)) + "</td><td>" +
              EscapeXml(e.message) + "</td></tr>\n";
    }
    html += "</tbody></table>\n";
  }
  html +=
      "<p class=\"note\">Charts drawn by heft. Palette: blue data, orange limits, teal "
      "nominal, brick alarms — chosen to stay apart for colour-blind readers; states also "
      "differ by shape, dash or hatching.</p>\n";
  html += "</body>\n</html>\n";
  return html;
}

}  // namespace heft
