// record_formats_fuzz.cpp — fuzz target for the configured record formats
// (core/record/record_format.h and io/record_format_factory.h): delimited text with a
// header of column names, key=value pairs, a regular-expression pattern and JSON lines.
//
// The first byte picks the format; every following line is one record, the first taken
// as a possible header. A record either parses, with a finite weight, or is refused with
// a reason; a Clone() reads the same bytes the same way.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <memory>
#include <string_view>

#include "core/record/format_settings.h"
#include "core/record/native_record.h"
#include "core/record/record_format.h"
#include "fuzz_check.h"
#include "io/record_format_factory.h"

namespace {

heft::FormatSettings Settings(int which) {
  heft::FormatSettings s;
  switch (which) {
    case 0:
      s.kind = heft::FormatKind::kDelimited;
      s.delimiter = ';';
      s.decimal_comma = true;
      s.header = heft::HeaderMode::kNames;
      s.field(heft::RecordField::kLine).name = "line";
      s.field(heft::RecordField::kHead).name = "head";
      s.field(heft::RecordField::kWeight).name = "weight";
      s.field(heft::RecordField::kTime).name = "time";
      s.field(heft::RecordField::kStatus).column = 4;
      break;
    case 1:
      s.kind = heft::FormatKind::kKeyValue;
      s.time_format = heft::TimeFormat::kEpochS;
      break;
    case 2:
      s.kind = heft::FormatKind::kPattern;
      s.line_id = "oats-1";
      s.pattern = R"(^H(?<head>\d+) +(?<weight>[-+]? *[0-9.]+) *(?<unit>k?g)? *(?<status>[A-Z]*)$)";
      break;
    default:
      s.kind = heft::FormatKind::kJsonLines;
      s.unit = heft::WeightUnit::kKilogram;
      break;
  }
  heft::ApplyDefaultKeys(&s);
  return s;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size == 0) return 0;
  const heft::FormatSettings settings = Settings(data[0] % 4);
  std::unique_ptr<heft::RecordFormat> format;
  if (!heft::MakeRecordFormat(settings, &format).ok()) std::abort();  // fixed, valid settings
  const std::unique_ptr<heft::RecordFormat> twin = format->Clone();
  const std::string_view input(reinterpret_cast<const char*>(data) + 1, size - 1);
  std::size_t begin = 0;
  bool first = true;
  while (begin <= input.size()) {
    std::size_t end = input.find('\n', begin);
    if (end == std::string_view::npos) end = input.size();
    const std::string_view record = input.substr(begin, end - begin);
    if (record.size() <= 4096) {  // the framer's limit
      bool header = false, twin_header = false;
      if (first) {
        header = format->TakeHeader(record);
        twin_header = twin->TakeHeader(record);
        FUZZ_CHECK(header == twin_header);
        first = false;
      }
      if (!header) {
        heft::RecordView a, b;
        const heft::RecordParse pa = format->Parse(record, &a);
        const heft::RecordParse pb = twin->Parse(record, &b);
        FUZZ_CHECK(pa.error == pb.error);
        if (pa.ok()) {
          FUZZ_CHECK(std::isfinite(a.grams));
          FUZZ_CHECK(a.grams == b.grams && a.line == b.line && a.head == b.head);
        } else {
          FUZZ_CHECK(!heft::RecordErrorName(pa.error).empty());
        }
      }
    }
    begin = end + 1;
  }
  return 0;
}
