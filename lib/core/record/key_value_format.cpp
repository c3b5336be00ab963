// key_value_format.cpp — see key_value_format.h.
#include "core/record/key_value_format.h"

#include "core/record/record_fields.h"

namespace heft {
namespace {
std::string_view Unquote(std::string_view s) {
  if (s.size() >= 2 && s.front() == '"' && s.back() == '"') return s.substr(1, s.size() - 2);
  return s;
}
}  // namespace

KeyValueFormat::KeyValueFormat(const FormatSettings& settings) : settings_(settings) {
  ApplyDefaultKeys(&settings_);
}

RecordParse KeyValueFormat::Parse(std::string_view text, RecordView* out) {
  if (HasControlBytes(text)) return RecordParse{RecordError::kBinary, -1, {}};
  if (TrimBlanks(text).empty()) return RecordParse{RecordError::kEmpty, -1, {}};
  const char pair_sep = settings_.pair_separator;
  const bool blank_sep = pair_sep == ' ';
  auto is_sep = [&](char c) { return c == pair_sep || (blank_sep && c == '\t'); };
  FieldTexts texts;
  std::size_t pos = 0;
  while (pos < text.size()) {
    while (pos < text.size() && is_sep(text[pos])) ++pos;
    std::size_t end = pos;
    while (end < text.size() && !is_sep(text[end])) {
      if (text[end] == '"') {  // a quoted value may hold the separator
        const std::size_t close = text.find('"', end + 1);
        end = close == std::string_view::npos ? text.size() : close + 1;
        continue;
      }
      ++end;
    }
    const std::string_view token = text.substr(pos, end - pos);
    pos = end;
    const std::size_t eq = token.find(settings_.value_separator);
    if (eq == std::string_view::npos) continue;
    const std::string_view key = TrimBlanks(token.substr(0, eq));
    const std::string_view value = Unquote(TrimBlanks(token.substr(eq + 1)));
    for (std::size_t i = 0; i < kRecordFieldCount; ++i) {
      if (!texts[i] && !settings_.fields[i].name.empty() &&
          EqualsIgnoreCase(key, settings_.fields[i].name)) {
        texts[i] = value;
      }
    }
  }
  static constexpr FieldColumns kNoColumns = {-1, -1, -1, -1, -1, -1};
  return FillRecord(settings_, texts, kNoColumns, out);
}

std::unique_ptr<RecordFormat> KeyValueFormat::Clone() const {
  return std::make_unique<KeyValueFormat>(settings_);
}

}  // namespace heft
