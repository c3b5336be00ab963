// native_format.h — the native CSV format (native_record.h) behind the
// RecordFormat interface, for sources that name it explicitly. StreamIngest
// without a configured format calls ParseNativeRecord directly, so both give
// the same results. Stateless; one per stream like every format.
#pragma once

#include <memory>
#include <string_view>

#include "core/record/record_format.h"

namespace heft {

class NativeFormat final : public RecordFormat {
 public:
  bool TakeHeader(std::string_view text) override { return IsNativeHeader(text); }
  RecordParse Parse(std::string_view text, RecordView* out) override {
    return ParseNativeRecord(text, out);
  }
  std::unique_ptr<RecordFormat> Clone() const override { return std::make_unique<NativeFormat>(); }
};

}  // namespace heft
