// record_fields.h — turns the raw text of a record's fields into a RecordView,
// the same way for every configured format.
//
// A format (delimited, key=value, pattern, JSON) only finds where each field's
// text is; FillRecord then reads line id, head, weight (number, decimal comma,
// unit suffix or unit field, scale, offset), time (per TimeFormat) and status
// (per StatusMapping). Pure functions; thread-safe. No allocation.
#pragma once

#include <array>
#include <cstddef>
#include <optional>
#include <string_view>

#include "core/record/format_settings.h"
#include "core/record/native_record.h"
#include "core/record/record_view.h"

namespace heft {

// The text of each field; nullopt when the record does not carry it.
using FieldTexts = std::array<std::optional<std::string_view>, kRecordFieldCount>;
// Column of each field for error reports (-1 when not column-based).
using FieldColumns = std::array<int, kRecordFieldCount>;

// Fills *out from the field texts (views into the texts; the line may point
// to settings.line_id). On error names the field; *out is then unspecified.
RecordParse FillRecord(const FormatSettings& settings, const FieldTexts& texts,
                       const FieldColumns& columns, RecordView* out);

// Weight text to grams: optional sign and blanks, a number ('.' or, with
// decimal_comma, ','), an optional unit suffix (g kg oz lb). Without a suffix
// the unit is `unit_text` when given, else settings.unit. Then x scale, then
// + offset_g. Returns kNone, kBadWeight or kBadUnit.
RecordError ReadWeight(std::string_view text, std::optional<std::string_view> unit_text,
                       const FormatSettings& settings, double* grams);

// Time text per format; empty text or TimeFormat::kNone → *has_time false.
bool ReadTime(std::string_view text, TimeFormat format, bool* has_time, std::int64_t* time_ms);

// Status text per mapping (case-insensitive, trimmed).
bool ReadStatus(std::string_view text, const StatusMapping& mapping, PackStatus* status);

// True if `text` holds a control byte other than tab (binary noise).
bool HasControlBytes(std::string_view text);

std::string_view TrimBlanks(std::string_view text);
bool EqualsIgnoreCase(std::string_view a, std::string_view b);

}  // namespace heft
