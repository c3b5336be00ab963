// chart_test.cpp — heft's SVG charts: nice ticks, time ticks, and the
// structure of the run chart, histogram and box plot for known data (number of
// bars and points, where the nominal and TNE lines sit, tick labels), down-
// sampling of long runs, empty ranges and single points.
//
// Expected pixel positions are worked out here from the documented layout
// (plot_frame.h: 960 px wide, margins left 78 / right 24) and the 1-2-5 axis
// rule, independently of the drawing code.
#include <algorithm>
#include <cmath>
#include <regex>
#include <string>
#include <vector>

#include <catch2/catch.hpp>

#include "core/chart/box_plot_chart.h"
#include "core/chart/histogram_chart.h"
#include "core/chart/nice_ticks.h"
#include "core/chart/run_chart.h"
#include "core/chart/svg_writer.h"
#include "core/stats/box_plot.h"

namespace heft::chart {
namespace {

std::size_t Count(const std::string& text, const std::string& needle) {
  std::size_t n = 0;
  for (std::size_t pos = text.find(needle); pos != std::string::npos;
       pos = text.find(needle, pos + needle.size())) {
    ++n;
  }
  return n;
}

// The value of attribute `attr` on the first element whose class list starts with `cls`.
double AttrOf(const std::string& svg, const std::string& cls, const std::string& attr) {
  const std::regex element("<[a-z]+ class=\"" + cls + "\"[^>]*>");
  std::smatch m;
  REQUIRE(std::regex_search(svg, m, element));
  const std::string tag = m.str();
  const std::regex value(" " + attr + "=\"([-0-9.]+)\"");
  std::smatch v;
  REQUIRE(std::regex_search(tag, v, value));
  return std::stod(v[1].str());
}

std::vector<std::string> TickLabels(const std::string& svg, const std::string& cls) {
  std::vector<std::string> labels;
  const std::regex text("class=\"tick-label " + cls + "\"[^>]*>([^<]*)</text>");
  for (auto it = std::sregex_iterator(svg.begin(), svg.end(), text); it != std::sregex_iterator();
       ++it) {
    labels.push_back((*it)[1].str());
  }
  return labels;
}

TEST_CASE("chart: 1-2-5 steps and axes", "[chart]") {
  CHECK(NiceStepAtLeast(0.3) == Approx(0.5));
  CHECK(NiceStepAtLeast(0.2) == Approx(0.2));  // exact 1-2-5 values stay
  CHECK(NiceStepAtLeast(7.0) == Approx(10.0));
  CHECK(NiceStepAtLeast(1.2e-3) == Approx(2e-3));
  // 497.3..508.9 in about 6 ticks: raw step 2.32 -> 5; 495..510.
  const NiceAxis axis = MakeNiceAxis(497.3, 508.9, 6);
  CHECK(axis.step == Approx(5.0));
  CHECK(axis.lo == Approx(495.0));
  CHECK(axis.hi == Approx(510.0));
  REQUIRE(axis.ticks.size() == 4);
  CHECK(axis.decimals == 0);
  // Small steps get decimals and no float noise in the labels.
  const NiceAxis fine = MakeNiceAxis(0.1, 0.7, 7);
  CHECK(fine.step == Approx(0.1));
  CHECK(FormatNumber(fine.ticks[2], fine.decimals) == "0.3");
  // One value: a small range around it, still ascending ticks.
  const NiceAxis one = MakeNiceAxis(500.0, 500.0, 6);
  CHECK(one.lo < 500.0);
  CHECK(one.hi > 500.0);
  CHECK(FormatNumber(-0.0001, 2) == "0.00");
}

TEST_CASE("chart: clock-time ticks", "[chart]") {
  // 2026-03-02T06:00:00Z .. 07:00:00Z, about 8 ticks: 10-minute steps.
  const std::int64_t six = 1772431200000;
  const TimeAxis axis = MakeTimeAxis(six, six + 3'600'000, 8, 0);
  CHECK(axis.step_ms == 600'000);
  REQUIRE(axis.labels.size() == 7);
  CHECK(axis.labels.front() == "06:00");
  CHECK(axis.labels.back() == "07:00");
  // The same in UTC+01:00 reads an hour later.
  const TimeAxis local = MakeTimeAxis(six, six + 3'600'000, 8, 60);
  CHECK(local.labels.front() == "07:00");
  CHECK(FormatDateTime(six, 0) == "2026-03-02 06:00:00");
}

TEST_CASE("chart: XML escaping and coordinates", "[chart]") {
  CHECK(EscapeXml("a<b & \"c\"") == "a&lt;b &amp; &quot;c&quot;");
  CHECK(Coord(12.3456) == "12.35");
  CHECK(Coord(12.0) == "12");
  CHECK(Coord(-0.001) == "0");
}

TEST_CASE("chart: histogram bars, reference lines and tick labels", "[chart]") {
  HistogramChartInput input;
  input.title = "oats-1";
  HistogramData& h = input.histogram;
  h.width = 1.0;
  for (int e = 495; e <= 505; ++e) h.edges.push_back(e);
  h.counts = {1, 3, 7, 12, 20, 18, 11, 6, 2, 1};
  h.count = 81;
  input.refs = {{500.0, "nominal", "ref-nominal", "#11776a", ""},
                {485.0, "T1", "ref-t1", "#c4610a", "8 4"},
                {470.0, "T2", "ref-t2", "#8e2a12", "10 3 2 3"}};
  const std::string svg = RenderHistogramChart(input);
  CHECK(Count(svg, "class=\"bar\"") == 10);
  CHECK(svg.find("data-count=\"20\"") != std::string::npos);
  // x axis: data and lines 470..505 plus half a bin -> 469.5..505.5; about 9
  // ticks: raw step 4.5 -> 5, axis 465..510. Plot 78..936 px.
  const auto x_of = [](double v) { return 78.0 + (v - 465.0) / 45.0 * 858.0; };
  CHECK(AttrOf(svg, "ref ref-nominal", "x1") == Approx(x_of(500.0)).margin(0.01));
  CHECK(AttrOf(svg, "ref ref-t1", "x1") == Approx(x_of(485.0)).margin(0.01));
  CHECK(AttrOf(svg, "ref ref-t2", "x1") == Approx(x_of(470.0)).margin(0.01));
  const std::vector<std::string> x_labels = TickLabels(svg, "x-tick");
  CHECK(x_labels == std::vector<std::string>{"465", "470", "475", "480", "485", "490", "495", "500",
                                             "505", "510"});
  // y: counts 0..20 in about 6 ticks: step 5.
  CHECK(TickLabels(svg, "y-tick") == std::vector<std::string>{"0", "5", "10", "15", "20"});
  // The first bar starts at 495 g.
  CHECK(AttrOf(svg, "bar", "x") == Approx(x_of(495.0)).margin(0.01));
}

TEST_CASE("chart: run chart points, states, limits and events", "[chart]") {
  RunChartInput input;
  input.title = "oats-1";
  const std::int64_t t0 = 1772431200000;
  for (int i = 0; i < 50; ++i) {
    input.points.push_back({t0 + i * 1000, 500.0 + (i % 7) * 0.5, i == 10 ? 1 : i == 20 ? 2 : 0});
  }
  input.centre = 501.5;
  input.sigma = 1.0;
  input.refs = {{500.0, "nominal", "ref-nominal", "#11776a", ""}};
  input.settling = {{t0, t0 + 5000}};
  input.events = {{t0 + 30'000, "shift", 1, false}, {t0 + 40'000, "shift", 1, true}};
  RunChartStats stats;
  const std::string svg = RenderRunChart(input, &stats);
  CHECK(stats.points_drawn == 50);
  CHECK(stats.columns_banded == 0);
  CHECK(Count(svg, "class=\"point ok\"") == 48);
  CHECK(Count(svg, "class=\"point rejected\"") == 1);  // triangle
  CHECK(Count(svg, "class=\"point error\"") == 1);     // cross
  CHECK(AttrOf(svg, "limit ucl", "data-value") == Approx(504.5));
  CHECK(AttrOf(svg, "limit lcl", "data-value") == Approx(498.5));
  CHECK(Count(svg, "class=\"zone zone-") == 3);
  CHECK(Count(svg, "class=\"settling\"") == 1);
  CHECK(Count(svg, "class=\"event-marker raised\"") == 1);
  CHECK(Count(svg, "class=\"event-marker cleared\"") == 1);
  CHECK(Count(svg, "class=\"event-label\"") == 1);  // cleared events carry no label
  // The nominal line sits where the y axis puts 500 g: y range 498.2..504.8
  // (limits ± 3.3 sigma), about 7 ticks: raw step 1.1 -> 2, axis 498..506,
  // mapped onto the plot rectangle.
  const double top = AttrOf(svg, "plot-border", "y");
  const double bottom = top + AttrOf(svg, "plot-border", "height");
  CHECK(TickLabels(svg, "y-tick") == std::vector<std::string>{"498", "500", "502", "504", "506"});
  CHECK(AttrOf(svg, "ref ref-nominal", "y1") ==
        Approx(bottom - (500.0 - 498.0) / 8.0 * (bottom - top)).margin(0.01));
}

TEST_CASE("chart: long runs are drawn as a min/max band per pixel column", "[chart]") {
  RunChartInput input;
  const std::int64_t t0 = 1772431200000;
  for (int i = 0; i < 100'000; ++i) {
    input.points.push_back({t0 + i * 500, 500.0 + std::sin(i * 0.01) * 3.0, 0});
  }
  input.points[5000].grams = 530.0;  // an extreme stays visible in its column
  RunChartStats stats;
  const std::string svg = RenderRunChart(input, &stats);
  CHECK(stats.points_drawn == 0);
  CHECK(stats.columns_banded > 700);
  CHECK(stats.columns_banded <= 960);
  CHECK(Count(svg, "class=\"band\"") == 1);
  CHECK(svg.size() < 60'000);  // a day of packs stays a small file
  // The y axis reaches the extreme.
  const std::vector<std::string> y = TickLabels(svg, "y-tick");
  REQUIRE(!y.empty());
  CHECK(std::stod(y.back()) >= 530.0);
}

TEST_CASE("chart: empty ranges and single points", "[chart]") {
  RunChartInput empty;
  empty.title = "nothing";
  const std::string svg = RenderRunChart(empty);
  CHECK(svg.find("No packs in this range") != std::string::npos);
  CHECK(svg.rfind("</svg>") != std::string::npos);
  RunChartInput one;
  one.points = {{1772431200000, 500.2, 0}};
  RunChartStats stats;
  const std::string single = RenderRunChart(one, &stats);
  CHECK(stats.points_drawn == 1);
  CHECK(single.find("nan") == std::string::npos);
  CHECK(single.find("inf") == std::string::npos);
  HistogramChartInput no_bins;
  CHECK(RenderHistogramChart(no_bins).find("No packs in this range") != std::string::npos);
  BoxPlotChartInput no_groups;
  CHECK(RenderBoxPlotChart(no_groups).find("No packs in this range") != std::string::npos);
}

TEST_CASE("chart: box plots with Tukey outliers", "[chart]") {
  // check-values.md §6.2: 1..10 and 100 (type 7): fences −4 / 16, 100 is an
  // outlier (and beyond the outer fence 8.5 + 15 = 23.5: far out).
  std::vector<double> a = {1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 100};
  std::vector<double> b = {4, 5, 5, 6, 6, 6, 7, 7, 8};
  BoxPlotChartInput input;
  input.title = "by head";
  input.groups = {{"1", ComputeBoxPlot(a)}, {"2", ComputeBoxPlot(b)}, {"3", BoxPlotData()}};
  const std::string svg = RenderBoxPlotChart(input);
  CHECK(Count(svg, "class=\"box\"") == 2);  // the empty group draws no box
  CHECK(Count(svg, "class=\"median\"") == 2);
  CHECK(Count(svg, "class=\"outlier far-out\"") == 1);
  CHECK(Count(svg, "class=\"box-group\"") == 3);  // but keeps its slot and label
  CHECK(TickLabels(svg, "x-tick") == std::vector<std::string>{"1", "2", "3"});
}

}  // namespace
}  // namespace heft::chart
