// native_record_fuzz.cpp — fuzz target for the native record parser
// (core/record/native_record.h). Every line of the input is parsed as a record; an
// accepted record must hold what the format promises, and the time and weight helpers
// must agree with it.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <string_view>

#include "core/model/pack.h"
#include "core/record/native_record.h"
#include "fuzz_check.h"

namespace {

// The latest time the native format can carry (a four-digit year).
constexpr std::int64_t kLatestTimeMs = 253402300799999;

void CheckRecord(std::string_view text) {
  heft::RecordView view;
  const heft::RecordParse parse = heft::ParseNativeRecord(text, &view);
  (void)heft::IsNativeHeader(text);
  // The fast path for the common shape agrees with the general parser.
  heft::RecordView general;
  const heft::RecordParse slow = heft::ParseNativeRecordGeneral(text, &general);
  FUZZ_CHECK(slow.ok() == parse.ok() && slow.error == parse.error && slow.field == parse.field);
  if (parse.ok()) {
    FUZZ_CHECK(general.line == view.line && general.head == view.head &&
               general.has_time == view.has_time && general.time_ms == view.time_ms &&
               general.status == view.status);
    FUZZ_CHECK(general.grams == view.grams ||
               (std::isnan(general.grams) && std::isnan(view.grams)));
  }
  if (parse.ok()) {
    FUZZ_CHECK(heft::IsNativeLineId(view.line));
    FUZZ_CHECK(std::isfinite(view.grams));
    FUZZ_CHECK(view.head == heft::kNoHead || view.head >= 0);
    FUZZ_CHECK(parse.field == -1);
  } else {
    FUZZ_CHECK(parse.field >= -1 && parse.field < 5);
    FUZZ_CHECK(!heft::RecordErrorName(parse.error).empty());
  }
  const auto grams = heft::ParseWeightGrams(text);
  if (grams) FUZZ_CHECK(std::isfinite(*grams));
  const auto time = heft::ParseTimeMs(text);
  if (time && *time >= 0 && *time <= kLatestTimeMs) {
    // Formatting and parsing again gives the same instant.
    char buffer[32];
    heft::FormatTimeMs(*time, buffer);
    const auto again = heft::ParseTimeMs(buffer);
    FUZZ_CHECK(again && *again == *time);
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view input(reinterpret_cast<const char*>(data), size);
  std::size_t begin = 0;
  while (begin <= input.size()) {
    const std::size_t end = input.find('\n', begin);
    CheckRecord(input.substr(begin, end == std::string_view::npos ? end : end - begin));
    if (end == std::string_view::npos) break;
    begin = end + 1;
  }
  // Any 8 bytes as a time: formatting must stay inside its buffer for every value.
  if (size >= 8) {
    std::int64_t t;
    __builtin_memcpy(&t, data, sizeof t);
    char buffer[32];
    heft::FormatTimeMs(t, buffer);
  }
  return 0;
}
