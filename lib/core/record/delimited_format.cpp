// delimited_format.cpp — see delimited_format.h.
#include "core/record/delimited_format.h"

namespace heft {

DelimitedFormat::DelimitedFormat(const FormatSettings& settings) : settings_(settings) {
  Reset();
  cells_.reserve(32);
}

void DelimitedFormat::Reset() {
  for (std::size_t i = 0; i < kRecordFieldCount; ++i) {
    const FieldRef& ref = settings_.fields[i];
    // Named columns stay unresolved until a header names them.
    columns_[i] = ref.column >= 0 ? ref.column : (ref.name.empty() ? -1 : kMissing);
  }
}

void DelimitedFormat::Split(std::string_view text) {
  cells_.clear();
  const char delimiter = settings_.delimiter;
  std::size_t pos = 0;
  for (;;) {
    // A quoted cell may hold the delimiter: "a;b".
    std::size_t start = pos;
    while (start < text.size() && (text[start] == ' ' || text[start] == '\t')) ++start;
    if (start < text.size() && text[start] == '"') {
      const std::size_t close = text.find('"', start + 1);
      if (close != std::string_view::npos) {
        const std::size_t next = text.find(delimiter, close + 1);
        cells_.push_back(text.substr(start + 1, close - start - 1));
        if (next == std::string_view::npos) return;
        pos = next + 1;
        continue;
      }
    }
    const std::size_t next = text.find(delimiter, pos);
    if (next == std::string_view::npos) {
      cells_.push_back(text.substr(pos));
      return;
    }
    cells_.push_back(text.substr(pos, next - pos));
    pos = next + 1;
  }
}

bool DelimitedFormat::TakeHeader(std::string_view text) {
  switch (settings_.header) {
    case HeaderMode::kNone:
      return false;
    case HeaderMode::kSkip:
      return true;
    case HeaderMode::kNames:
      break;
  }
  Split(text);
  for (std::size_t i = 0; i < kRecordFieldCount; ++i) {
    const FieldRef& ref = settings_.fields[i];
    if (ref.column >= 0 || ref.name.empty()) continue;
    columns_[i] = kMissing;
    for (std::size_t c = 0; c < cells_.size(); ++c) {
      if (EqualsIgnoreCase(TrimBlanks(cells_[c]), ref.name)) {
        columns_[i] = static_cast<int>(c);
        break;
      }
    }
  }
  return true;
}

RecordParse DelimitedFormat::Parse(std::string_view text, RecordView* out) {
  if (HasControlBytes(text)) return RecordParse{RecordError::kBinary, -1, {}};
  if (TrimBlanks(text).empty()) return RecordParse{RecordError::kEmpty, -1, {}};
  Split(text);
  FieldTexts texts;
  for (std::size_t i = 0; i < kRecordFieldCount; ++i) {
    const int column = columns_[i];
    if (column == -1) continue;
    if (column == kMissing) {
      // Named in the config but not in this stream's header.
      return RecordParse{RecordError::kMissingField, -1,
                         RecordFieldName(static_cast<RecordField>(i))};
    }
    if (static_cast<std::size_t>(column) >= cells_.size()) {
      return RecordParse{RecordError::kColumnCount, column,
                         RecordFieldName(static_cast<RecordField>(i))};
    }
    texts[i] = cells_[static_cast<std::size_t>(column)];
  }
  return FillRecord(settings_, texts, columns_, out);
}

std::unique_ptr<RecordFormat> DelimitedFormat::Clone() const {
  return std::make_unique<DelimitedFormat>(settings_);
}

}  // namespace heft
