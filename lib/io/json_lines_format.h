// json_lines_format.h — one JSON object per record (nlohmann-json), e.g.
//
//   {"line":"oats-1","head":3,"net":503.4,"unit":"g","ts":1772431200094}
//
// Fields are looked up by key; a key with dots ("scale.net") walks nested
// objects. Strings and numbers are accepted for every field (numbers are
// read back from their shortest round-trip text, so 503.4 stays 503.4); null
// or a missing key means the record does not carry the field. Anything but an
// object is bad_syntax. Views in the RecordView point into this format's copy
// of the document, valid until the next Parse. One per stream.
#pragma once

#include <array>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json.hpp>

#include "core/record/format_settings.h"
#include "core/record/record_format.h"

namespace heft {

class JsonLinesFormat final : public RecordFormat {
 public:
  explicit JsonLinesFormat(const FormatSettings& settings);

  bool TakeHeader(std::string_view) override { return false; }
  RecordParse Parse(std::string_view text, RecordView* out) override;
  std::unique_ptr<RecordFormat> Clone() const override;

 private:
  FormatSettings settings_;
  std::array<std::vector<std::string>, kRecordFieldCount> paths_;  // key split at '.'
  nlohmann::json document_;
  std::array<std::string, kRecordFieldCount> number_text_;  // numbers as text
};

}  // namespace heft
