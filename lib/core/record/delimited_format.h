// delimited_format.h — delimited text with a column map, e.g. a semicolon
// export with decimal commas:
//
//   Date;Line;Head;Net;Unit;Result
//   2026-03-02T06:00:00Z;oats-1;3;503,4;g;OK
//
// Fields are found by column (0-based here; the config counts from 1) or by
// the name a header line gives them (HeaderMode::kNames). A field wrapped in
// double quotes may contain the delimiter; quotes are not unescaped. Records
// with control bytes are refused as binary. One per stream; not thread-safe.
#pragma once

#include <array>
#include <memory>
#include <string_view>
#include <vector>

#include "core/record/format_settings.h"
#include "core/record/record_fields.h"
#include "core/record/record_format.h"

namespace heft {

class DelimitedFormat final : public RecordFormat {
 public:
  // REQUIRES: CheckFormatSettings(settings) is empty and kind is kDelimited.
  explicit DelimitedFormat(const FormatSettings& settings);

  bool TakeHeader(std::string_view text) override;
  RecordParse Parse(std::string_view text, RecordView* out) override;
  void Reset() override;
  std::unique_ptr<RecordFormat> Clone() const override;

 private:
  static constexpr int kMissing = -2;  // named column absent from the header

  void Split(std::string_view text);

  FormatSettings settings_;
  FieldColumns columns_;                 // resolved 0-based columns; -1 unused, kMissing
  std::vector<std::string_view> cells_;  // reused per record
};

}  // namespace heft
