// json_lines_format.cpp — see json_lines_format.h.
#include "io/json_lines_format.h"

#include "core/record/record_fields.h"

namespace heft {

JsonLinesFormat::JsonLinesFormat(const FormatSettings& settings) : settings_(settings) {
  ApplyDefaultKeys(&settings_);
  for (std::size_t i = 0; i < kRecordFieldCount; ++i) {
    const std::string& key = settings_.fields[i].name;
    if (key.empty()) continue;
    std::size_t start = 0;
    for (;;) {
      const std::size_t dot = key.find('.', start);
      paths_[i].push_back(key.substr(start, dot - start));
      if (dot == std::string::npos) break;
      start = dot + 1;
    }
  }
}

RecordParse JsonLinesFormat::Parse(std::string_view text, RecordView* out) {
  if (HasControlBytes(text)) return RecordParse{RecordError::kBinary, -1, {}};
  if (TrimBlanks(text).empty()) return RecordParse{RecordError::kEmpty, -1, {}};
  // No exceptions: a parse error gives a `discarded` value.
  document_ = nlohmann::json::parse(text.begin(), text.end(), nullptr, false);
  if (document_.is_discarded() || !document_.is_object()) {
    return RecordParse{RecordError::kBadSyntax, -1, {}};
  }
  FieldTexts texts;
  for (std::size_t i = 0; i < kRecordFieldCount; ++i) {
    if (paths_[i].empty()) continue;
    const nlohmann::json* node = &document_;
    for (const std::string& key : paths_[i]) {
      if (!node->is_object()) {
        node = nullptr;
        break;
      }
      const auto it = node->find(key);
      if (it == node->end()) {
        node = nullptr;
        break;
      }
      node = &*it;
    }
    if (node == nullptr || node->is_null()) continue;
    if (node->is_string()) {
      texts[i] = std::string_view(node->get_ref<const std::string&>());
    } else if (node->is_number()) {
      number_text_[i] = node->dump();
      texts[i] = std::string_view(number_text_[i]);
    } else {
      // An object, list or boolean where a value belongs.
      const auto field = static_cast<RecordField>(i);
      RecordError error = RecordError::kBadSyntax;
      switch (field) {
        case RecordField::kLine:
          error = RecordError::kBadLine;
          break;
        case RecordField::kHead:
          error = RecordError::kBadHead;
          break;
        case RecordField::kWeight:
          error = RecordError::kBadWeight;
          break;
        case RecordField::kTime:
          error = RecordError::kBadTime;
          break;
        case RecordField::kUnit:
          error = RecordError::kBadUnit;
          break;
        case RecordField::kStatus:
          error = RecordError::kBadStatus;
          break;
      }
      return RecordParse{error, -1, RecordFieldName(field)};
    }
  }
  static constexpr FieldColumns kNoColumns = {-1, -1, -1, -1, -1, -1};
  return FillRecord(settings_, texts, kNoColumns, out);
}

std::unique_ptr<RecordFormat> JsonLinesFormat::Clone() const {
  return std::make_unique<JsonLinesFormat>(settings_);
}

}  // namespace heft
