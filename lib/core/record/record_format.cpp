// record_format.cpp — the core's format factory and the checks every
// configured format shares (see record_format.h).
#include "core/record/record_format.h"

#include "core/record/delimited_format.h"
#include "core/record/key_value_format.h"
#include "core/record/native_format.h"
#include "core/record/pattern_format.h"

namespace heft {

std::string CheckFormatSettings(const FormatSettings& s) {
  const FieldRef& line = s.field(RecordField::kLine);
  switch (s.kind) {
    case FormatKind::kNative:
      if (!s.line_id.empty()) return "line_id: the native format names the line in each record";
      return {};
    case FormatKind::kPattern:
      if (s.pattern.empty()) return "format.pattern: required for the pattern format";
      for (const FieldRef& ref : s.fields) {
        if (ref.used()) return "format.fields: the pattern format names fields by its groups";
      }
      return {};  // groups are checked when the pattern is compiled
    case FormatKind::kDelimited:
      if (s.delimiter == '"') return "format.delimiter: the double quote cannot be a delimiter";
      if (s.decimal_comma && s.delimiter == ',') {
        return "format.decimal_comma: needs a delimiter other than ','";
      }
      for (const FieldRef& ref : s.fields) {
        if (!ref.name.empty() && s.header != HeaderMode::kNames) {
          return "format.fields: column names need header: names";
        }
      }
      if (!s.field(RecordField::kWeight).used()) return "format.fields.weight: required";
      break;
    case FormatKind::kKeyValue:
      if (s.pair_separator == s.value_separator) {
        return "format.pair_separator: must differ from value_separator";
      }
      break;
    case FormatKind::kJsonLines:
      break;
  }
  if (!s.line_id.empty() && line.used()) {
    return "format.fields.line: the source fixes line_id; set one or the other";
  }
  if (s.line_id.empty() && !line.used() && s.kind == FormatKind::kDelimited) {
    return "format.fields.line: required unless the source sets line_id";
  }
  return {};
}

Status MakeCoreRecordFormat(const FormatSettings& settings, std::unique_ptr<RecordFormat>* out) {
  if (const std::string problem = CheckFormatSettings(settings); !problem.empty()) {
    return Status::Error(problem);
  }
  switch (settings.kind) {
    case FormatKind::kNative:
      *out = std::make_unique<NativeFormat>();
      return Status::Ok();
    case FormatKind::kDelimited:
      *out = std::make_unique<DelimitedFormat>(settings);
      return Status::Ok();
    case FormatKind::kKeyValue:
      *out = std::make_unique<KeyValueFormat>(settings);
      return Status::Ok();
    case FormatKind::kPattern:
      return PatternFormat::Make(settings, out);
    case FormatKind::kJsonLines:
      break;
  }
  return Status::Error("format.type: json_lines is built by io/record_format_factory.h");
}

}  // namespace heft
