// svg_writer.cpp — SVG text building.
#include "core/chart/svg_writer.h"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace heft::chart {

std::string EscapeXml(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
    switch (c) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      case '\'':
        out += "&apos;";
        break;
      default:
        // Control characters are not allowed in XML 1.0 text.
        if (static_cast<unsigned char>(c) < 0x20 && c != '\n' && c != '\t') {
          out += ' ';
        } else {
          out += c;
        }
    }
  }
  return out;
}

std::string Coord(double value) {
  if (!std::isfinite(value)) return "0";
  char buffer[48];
  std::snprintf(buffer, sizeof buffer, "%.2f", value);
  std::string text(buffer);
  while (!text.empty() && text.back() == '0') text.pop_back();
  if (!text.empty() && text.back() == '.') text.pop_back();
  if (text == "-0") text = "0";
  return text;
}

SvgWriter::SvgWriter(double width, double height, std::string_view label)
    : width_(width), height_(height), label_(label) {}

void SvgWriter::Def(std::string_view markup) { defs_.append(markup); }

void SvgWriter::BeginGroup(std::string_view css_class, std::string_view extra_attributes) {
  body_ += "<g";
  if (!css_class.empty()) {
    body_ += " class=\"";
    body_ += EscapeXml(css_class);
    body_ += '"';
  }
  if (!extra_attributes.empty()) {
    body_ += ' ';
    body_.append(extra_attributes);
  }
  body_ += ">\n";
  ++open_groups_;
}

void SvgWriter::EndGroup() {
  if (open_groups_ == 0) return;
  body_ += "</g>\n";
  --open_groups_;
}

void SvgWriter::Open(std::string_view tag, std::string_view css_class) {
  body_ += '<';
  body_.append(tag);
  if (!css_class.empty()) {
    body_ += " class=\"";
    body_ += EscapeXml(css_class);
    body_ += '"';
  }
}

void SvgWriter::Close(const Paint& paint, std::string_view extra_attributes) {
  body_ += " stroke=\"";
  body_ += paint.stroke.empty() ? "none" : paint.stroke;
  body_ += "\" fill=\"";
  body_ += paint.fill.empty() ? "none" : paint.fill;
  body_ += '"';
  if (!paint.stroke.empty() && paint.stroke_width != 1.0) {
    body_ += " stroke-width=\"" + Coord(paint.stroke_width) + '"';
  }
  if (!paint.dash.empty()) body_ += " stroke-dasharray=\"" + paint.dash + '"';
  if (paint.opacity < 1.0) body_ += " fill-opacity=\"" + Coord(paint.opacity) + '"';
  if (!extra_attributes.empty()) {
    body_ += ' ';
    body_.append(extra_attributes);
  }
  body_ += "/>\n";
}

void SvgWriter::Line(double x1, double y1, double x2, double y2, const Paint& paint,
                     std::string_view css_class, std::string_view extra_attributes) {
  Open("line", css_class);
  body_ += " x1=\"" + Coord(x1) + "\" y1=\"" + Coord(y1) + "\" x2=\"" + Coord(x2) + "\" y2=\"" +
           Coord(y2) + '"';
  Close(paint, extra_attributes);
}

void SvgWriter::Rect(double x, double y, double w, double h, const Paint& paint,
                     std::string_view css_class, std::string_view extra_attributes) {
  Open("rect", css_class);
  body_ += " x=\"" + Coord(x) + "\" y=\"" + Coord(y) + "\" width=\"" + Coord(std::max(w, 0.0)) +
           "\" height=\"" + Coord(std::max(h, 0.0)) + '"';
  Close(paint, extra_attributes);
}

void SvgWriter::Circle(double cx, double cy, double r, const Paint& paint,
                       std::string_view css_class, std::string_view extra_attributes) {
  Open("circle", css_class);
  body_ += " cx=\"" + Coord(cx) + "\" cy=\"" + Coord(cy) + "\" r=\"" + Coord(r) + '"';
  Close(paint, extra_attributes);
}

namespace {
std::string PointList(const std::vector<std::pair<double, double>>& points) {
  std::string text;
  text.reserve(points.size() * 12);
  for (const auto& [x, y] : points) {
    if (!text.empty()) text += ' ';
    text += Coord(x);
    text += ',';
    text += Coord(y);
  }
  return text;
}
}  // namespace

void SvgWriter::Polygon(const std::vector<std::pair<double, double>>& points, const Paint& paint,
                        std::string_view css_class, std::string_view extra_attributes) {
  Open("polygon", css_class);
  body_ += " points=\"" + PointList(points) + '"';
  Close(paint, extra_attributes);
}

void SvgWriter::Polyline(const std::vector<std::pair<double, double>>& points, const Paint& paint,
                         std::string_view css_class, std::string_view extra_attributes) {
  Open("polyline", css_class);
  body_ += " points=\"" + PointList(points) + '"';
  Close(paint, extra_attributes);
}

void SvgWriter::Path(std::string_view d, const Paint& paint, std::string_view css_class,
                     std::string_view extra_attributes) {
  Open("path", css_class);
  body_ += " d=\"";
  body_.append(d);
  body_ += '"';
  Close(paint, extra_attributes);
}

void SvgWriter::Text(double x, double y, std::string_view text, const TextStyle& style,
                     std::string_view css_class) {
  Open("text", css_class);
  body_ += " x=\"" + Coord(x) + "\" y=\"" + Coord(y) + "\" font-size=\"" + Coord(style.size) +
           "\" fill=\"" + style.colour + '"';
  if (style.anchor == Anchor::kMiddle) body_ += " text-anchor=\"middle\"";
  if (style.anchor == Anchor::kEnd) body_ += " text-anchor=\"end\"";
  if (style.bold) body_ += " font-weight=\"bold\"";
  if (style.rotate != 0.0) {
    body_ += " transform=\"rotate(" + Coord(style.rotate) + ' ' + Coord(x) + ' ' + Coord(y) + ")\"";
  }
  body_ += '>';
  body_ += EscapeXml(text);
  body_ += "</text>\n";
}

void SvgWriter::Title(std::string_view text) {
  body_ += "<title>";
  body_ += EscapeXml(text);
  body_ += "</title>\n";
}

std::string SvgWriter::Finish() {
  while (open_groups_ > 0) EndGroup();
  std::string out;
  out.reserve(body_.size() + defs_.size() + 512);
  out += "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"" + Coord(width_) +
         "\" height=\"" + Coord(height_) + "\" viewBox=\"0 0 " + Coord(width_) + ' ' +
         Coord(height_) +
         "\" role=\"img\" font-family=\"DejaVu Sans, Liberation Sans, Arial, sans-serif\">\n";
  out += "<title>" + EscapeXml(label_) + "</title>\n";
  if (!defs_.empty()) out += "<defs>" + defs_ + "</defs>\n";
  out += "<rect class=\"background\" x=\"0\" y=\"0\" width=\"" + Coord(width_) + "\" height=\"" +
         Coord(height_) + "\" fill=\"#ffffff\" stroke=\"none\"/>\n";
  out += body_;
  out += "</svg>\n";
  return out;
}

}  // namespace heft::chart
