// key_value_format.h — records of key=value pairs, e.g.
//
//   LINE=oats-1 HEAD=3 NET=503.4 UNIT=g ST=OK
//
// Pairs are split at the pair separator (runs of it count as one; a blank
// separator also splits at tabs), a key from its value at the first value
// separator. Keys compare without regard to case; the first pair with a key
// wins; tokens without a value separator are ignored (e.g. a leading "ST,GS"
// flag word). Values may be wrapped in double quotes (which may hold the
// pair separator). Stateless per stream.
#pragma once

#include <memory>
#include <string_view>

#include "core/record/format_settings.h"
#include "core/record/record_format.h"

namespace heft {

class KeyValueFormat final : public RecordFormat {
 public:
  // REQUIRES: CheckFormatSettings(settings) is empty and kind is kKeyValue.
  explicit KeyValueFormat(const FormatSettings& settings);

  bool TakeHeader(std::string_view) override { return false; }
  RecordParse Parse(std::string_view text, RecordView* out) override;
  std::unique_ptr<RecordFormat> Clone() const override;

 private:
  FormatSettings settings_;
};

}  // namespace heft
