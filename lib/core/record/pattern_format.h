// pattern_format.h — records matched by a regular expression whose named
// groups are the fields, e.g. for an indicator's print line:
//
//   ^(?<line>[\w.-]+) +H(?<head>\d+) +(?<weight>[-+]? *[\d.]+) *(?<unit>k?g)$
//
// Group names are the field names (line, head, weight, time, unit, status);
// `weight` is required, `line` unless the source fixes a line id. The pattern
// is ECMAScript (std::regex); (?<name>...) is translated to a numbered group
// once, at construction, and the compiled expression is shared by clones.
// std::regex is slow (see the README for measured rates) and recursive, so
// records longer than kMaxInput are refused as too long. The regex is searched
// (anchor with ^ and $ to match the whole record). One per stream.
#pragma once

#include <array>
#include <memory>
#include <regex>
#include <string>
#include <string_view>

#include "core/model/status.h"
#include "core/record/format_settings.h"
#include "core/record/record_format.h"

namespace heft {

class PatternFormat final : public RecordFormat {
 public:
  static constexpr std::size_t kMaxInput = 4096;

  // Compiles settings.pattern; on error says why (group names, regex syntax).
  static Status Make(const FormatSettings& settings, std::unique_ptr<RecordFormat>* out);

  bool TakeHeader(std::string_view) override { return false; }
  RecordParse Parse(std::string_view text, RecordView* out) override;
  std::unique_ptr<RecordFormat> Clone() const override;

  struct Compiled {
    std::regex regex;
    std::array<int, kRecordFieldCount> group{};  // capture group per field; 0 = none
  };

  // Rewrites (?<name>...) as plain groups and numbers them; exposed for tests.
  // On error returns false with *error set.
  static bool TranslateNamedGroups(std::string_view pattern, std::string* ecmascript,
                                   std::array<int, kRecordFieldCount>* groups, std::string* error);

 private:
  PatternFormat(const FormatSettings& settings, std::shared_ptr<const Compiled> compiled)
      : settings_(settings), compiled_(std::move(compiled)) {}

  FormatSettings settings_;
  std::shared_ptr<const Compiled> compiled_;
  std::cmatch match_;  // reused per record
};

}  // namespace heft
