// pattern_format.cpp — see pattern_format.h.
#include "core/record/pattern_format.h"

#include <exception>

#include "core/record/record_fields.h"

namespace heft {
namespace {
bool IsNameChar(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_';
}
}  // namespace

bool PatternFormat::TranslateNamedGroups(std::string_view pattern, std::string* ecmascript,
                                         std::array<int, kRecordFieldCount>* groups,
                                         std::string* error) {
  groups->fill(0);
  ecmascript->clear();
  int count = 0;
  bool in_class = false;
  for (std::size_t i = 0; i < pattern.size(); ++i) {
    const char c = pattern[i];
    if (c == '\\') {  // an escape: copy it and the next character as they are
      ecmascript->push_back(c);
      if (i + 1 < pattern.size()) ecmascript->push_back(pattern[++i]);
      continue;
    }
    if (in_class) {
      if (c == ']') in_class = false;
      ecmascript->push_back(c);
      continue;
    }
    if (c == '[') {
      in_class = true;
      ecmascript->push_back(c);
      // "[]...]" and "[^]...]": a leading ']' is a literal.
      if (i + 1 < pattern.size() && pattern[i + 1] == '^') ecmascript->push_back(pattern[++i]);
      if (i + 1 < pattern.size() && pattern[i + 1] == ']') ecmascript->push_back(pattern[++i]);
      continue;
    }
    if (c != '(') {
      ecmascript->push_back(c);
      continue;
    }
    if (i + 1 < pattern.size() && pattern[i + 1] == '?') {
      if (i + 2 < pattern.size() && pattern[i + 2] == '<' && i + 3 < pattern.size() &&
          IsNameChar(pattern[i + 3])) {
        std::size_t end = i + 3;
        while (end < pattern.size() && IsNameChar(pattern[end])) ++end;
        if (end >= pattern.size() || pattern[end] != '>') {
          *error = "unterminated group name at offset " + std::to_string(i);
          return false;
        }
        const std::string_view name = pattern.substr(i + 3, end - i - 3);
        const auto field = RecordFieldFromName(name);
        if (!field) {
          *error = "group name \"" + std::string(name) +
                   "\" is not a field (line, head, weight, time, unit, status)";
          return false;
        }
        int& slot = (*groups)[static_cast<std::size_t>(*field)];
        if (slot != 0) {
          *error = "group \"" + std::string(name) + "\" appears twice";
          return false;
        }
        slot = ++count;
        ecmascript->push_back('(');
        i = end;
        continue;
      }
      ecmascript->push_back(c);  // (?: (?= (?! : not capturing
      continue;
    }
    ++count;
    ecmascript->push_back(c);
  }
  return true;
}

Status PatternFormat::Make(const FormatSettings& settings, std::unique_ptr<RecordFormat>* out) {
  auto compiled = std::make_shared<Compiled>();
  std::string ecmascript;
  std::string error;
  if (!TranslateNamedGroups(settings.pattern, &ecmascript, &compiled->group, &error)) {
    return Status::Error("pattern: " + error);
  }
  try {
    compiled->regex = std::regex(ecmascript, std::regex::ECMAScript | std::regex::optimize);
  } catch (const std::regex_error& e) {
    return Status::Error(std::string("pattern: not a valid regular expression: ") + e.what());
  }
  auto has = [&](RecordField f) { return compiled->group[static_cast<std::size_t>(f)] != 0; };
  if (!has(RecordField::kWeight)) return Status::Error("pattern: no (?<weight>...) group");
  if (settings.line_id.empty() && !has(RecordField::kLine)) {
    return Status::Error("pattern: no (?<line>...) group and no line_id for the source");
  }
  if (!settings.line_id.empty() && has(RecordField::kLine)) {
    return Status::Error("pattern: has a (?<line>...) group but the source fixes line_id");
  }
  out->reset(new PatternFormat(settings, std::move(compiled)));
  return Status::Ok();
}

RecordParse PatternFormat::Parse(std::string_view text, RecordView* out) {
  if (HasControlBytes(text)) return RecordParse{RecordError::kBinary, -1, {}};
  if (TrimBlanks(text).empty()) return RecordParse{RecordError::kEmpty, -1, {}};
  if (text.size() > kMaxInput) return RecordParse{RecordError::kTooLong, -1, {}};
  bool found = false;
  try {
    found = std::regex_search(text.data(), text.data() + text.size(), match_, compiled_->regex);
  } catch (const std::exception&) {
    found = false;  // error_complexity / error_stack on a pathological record
  }
  if (!found) return RecordParse{RecordError::kNoMatch, -1, {}};
  FieldTexts texts;
  for (std::size_t i = 0; i < kRecordFieldCount; ++i) {
    const int group = compiled_->group[i];
    if (group == 0) continue;
    const auto& sub = match_[static_cast<std::size_t>(group)];
    if (sub.matched) texts[i] = std::string_view(sub.first, static_cast<std::size_t>(sub.length()));
  }
  static constexpr FieldColumns kNoColumns = {-1, -1, -1, -1, -1, -1};
  return FillRecord(settings_, texts, kNoColumns, out);
}

std::unique_ptr<RecordFormat> PatternFormat::Clone() const {
  return std::unique_ptr<RecordFormat>(new PatternFormat(settings_, compiled_));
}

}  // namespace heft
