// svg_writer.h — builds one standalone SVG document as text: lines, rectangles,
// circles, polygons, paths and text with presentation attributes (so the file
// renders the same inside the HTML report and on its own), XML escaping and
// compact coordinates (at most 2 decimals).
//
// Every element may carry a class name; the tests count elements by class
// (e.g. "bar", "point", "ref-nominal") and the report's print CSS uses none of
// them, so the look never depends on a stylesheet. Used by the chart writers.
// Pure; not thread-safe (one writer per chart).
#pragma once

#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace heft::chart {

// How a shape is drawn. Empty colour = "none".
struct Paint {
  std::string stroke;
  std::string fill;
  double stroke_width = 1.0;
  std::string dash;      // stroke-dasharray, e.g. "6 3"; empty = solid
  double opacity = 1.0;  // fill-opacity (1 = opaque)
};

enum class Anchor { kStart, kMiddle, kEnd };

struct TextStyle {
  double size = 13.0;  // px
  std::string colour = "#1d232b";
  Anchor anchor = Anchor::kStart;
  bool bold = false;
  double rotate = 0.0;  // degrees about (x, y)
};

// "&amp;", "&lt;", "&gt;", "&quot;", "&apos;" for the five XML specials.
std::string EscapeXml(std::string_view text);

// Compact coordinate text: at most 2 decimals, trailing zeros dropped.
std::string Coord(double value);

class SvgWriter {
 public:
  // `label` becomes the <title> (read by screen readers and shown as a tooltip).
  SvgWriter(double width, double height, std::string_view label);

  // Raw markup inside <defs> (patterns, markers).
  void Def(std::string_view markup);
  void BeginGroup(std::string_view css_class, std::string_view extra_attributes = {});
  void EndGroup();

  void Line(double x1, double y1, double x2, double y2, const Paint& paint,
            std::string_view css_class = {}, std::string_view extra_attributes = {});
  void Rect(double x, double y, double w, double h, const Paint& paint,
            std::string_view css_class = {}, std::string_view extra_attributes = {});
  void Circle(double cx, double cy, double r, const Paint& paint, std::string_view css_class = {},
              std::string_view extra_attributes = {});
  void Polygon(const std::vector<std::pair<double, double>>& points, const Paint& paint,
               std::string_view css_class = {}, std::string_view extra_attributes = {});
  void Polyline(const std::vector<std::pair<double, double>>& points, const Paint& paint,
                std::string_view css_class = {}, std::string_view extra_attributes = {});
  void Path(std::string_view d, const Paint& paint, std::string_view css_class = {},
            std::string_view extra_attributes = {});
  void Text(double x, double y, std::string_view text, const TextStyle& style,
            std::string_view css_class = {});
  // A <title> child for the next tooltip-capable group: call inside a group.
  void Title(std::string_view text);

  double width() const { return width_; }
  double height() const { return height_; }

  // The complete document (<svg ...> ... </svg>), groups closed.
  std::string Finish();

 private:
  void Open(std::string_view tag, std::string_view css_class);
  void Close(const Paint& paint, std::string_view extra_attributes);

  double width_;
  double height_;
  std::string label_;
  std::string defs_;
  std::string body_;
  int open_groups_ = 0;
};

}  // namespace heft::chart
