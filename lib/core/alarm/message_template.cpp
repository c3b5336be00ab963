#include "core/alarm/message_template.h"

#include <algorithm>

namespace heft {
namespace {

// One pass over the template. Calls literal(text) and value(name) in order;
// group_begin()/group_end() around optional groups. Returns the first syntax
// error as "column N: reason", or "" when the text is well formed.
template <class Sink>
std::string Scan(std::string_view text, Sink& sink) {
  bool in_group = false;
  std::size_t group_column = 0;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char c = text[i];
    const bool doubled = i + 1 < text.size() && text[i + 1] == c;
    if ((c == '{' || c == '}' || c == '[' || c == ']') && doubled) {
      sink.Literal(std::string_view(&text[i], 1));
      ++i;
      continue;
    }
    if (c == '{') {
      const std::size_t close = text.find('}', i + 1);
      if (close == std::string_view::npos) {
        return "column " + std::to_string(i + 1) + ": '{' is not closed";
      }
      const std::string_view name = text.substr(i + 1, close - i - 1);
      if (name.empty() || name.find_first_of("{[]") != std::string_view::npos) {
        return "column " + std::to_string(i + 1) + ": bad placeholder";
      }
      sink.Value(name, i + 1);
      i = close;
    } else if (c == '}') {
      return "column " + std::to_string(i + 1) + ": '}' without '{' (write }} for a brace)";
    } else if (c == '[') {
      if (in_group) return "column " + std::to_string(i + 1) + ": groups do not nest";
      in_group = true;
      group_column = i + 1;
      sink.GroupBegin();
    } else if (c == ']') {
      if (!in_group) {
        return "column " + std::to_string(i + 1) + ": ']' without '[' (write ]] for a bracket)";
      }
      in_group = false;
      sink.GroupEnd();
    } else {
      sink.Literal(std::string_view(&text[i], 1));
    }
  }
  if (in_group) return "column " + std::to_string(group_column) + ": '[' is not closed";
  return "";
}

struct Checker {
  const std::vector<std::string_view>& known;
  std::string error;
  void Literal(std::string_view) {}
  void GroupBegin() {}
  void GroupEnd() {}
  void Value(std::string_view name, std::size_t column) {
    if (!error.empty()) return;
    if (std::find(known.begin(), known.end(), name) == known.end()) {
      error =
          "column " + std::to_string(column) + ": unknown placeholder {" + std::string(name) + "}";
    }
  }
};

struct Renderer {
  const TemplateValues& values;
  std::string out;
  std::string group;
  bool in_group = false;
  bool group_ok = true;
  std::string& Target() { return in_group ? group : out; }
  void Literal(std::string_view text) { Target().append(text); }
  void GroupBegin() {
    in_group = true;
    group_ok = true;
    group.clear();
  }
  void GroupEnd() {
    in_group = false;
    if (group_ok) out += group;
  }
  void Value(std::string_view name, std::size_t) {
    auto it = values.find(name);
    if (it == values.end() || it->second.empty()) {
      group_ok = false;
      return;
    }
    Target() += it->second;
  }
};

}  // namespace

Status ValidateTemplate(std::string_view text, const std::vector<std::string_view>& known) {
  Checker checker{known, ""};
  std::string syntax = Scan(text, checker);
  if (!syntax.empty()) return Status::Error(syntax);
  if (!checker.error.empty()) return Status::Error(checker.error);
  return Status::Ok();
}

std::string RenderTemplate(std::string_view text, const TemplateValues& values) {
  Renderer renderer{values, "", "", false, true};
  if (!Scan(text, renderer).empty()) return std::string(text);
  return renderer.out;
}

}  // namespace heft
