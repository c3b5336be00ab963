// format_settings.h — a source's record format descriptor (ours): how to read
// one framed record of a device's feed into a RecordView.
//
// Plain data, filled by the config loader (io/source_config_loader.h) and
// compiled into a RecordFormat (core/record/record_format.h). A new device is
// a new descriptor in the YAML config, not new code. Thread-agnostic value type.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/model/pack.h"

namespace heft {

enum class FormatKind : std::uint8_t {
  kNative,     // our CSV: time,line,head,weight[,status] (native_record.h)
  kDelimited,  // delimited text with a column map
  kKeyValue,   // key=value pairs
  kPattern,    // a regular expression with named groups
  kJsonLines,  // one JSON object per record (parsed in lib/io)
};

// The values a record can carry. Names (RecordFieldName) are the config keys,
// the default keys of key=value and JSON records, and the regex group names.
enum class RecordField : std::uint8_t { kLine, kHead, kWeight, kTime, kUnit, kStatus };
inline constexpr std::size_t kRecordFieldCount = 6;
std::string_view RecordFieldName(RecordField field);
std::optional<RecordField> RecordFieldFromName(std::string_view name);

enum class TimeFormat : std::uint8_t {
  kAuto,     // ISO-8601 UTC or integer epoch ms, as in the native format
  kIso8601,  // 2026-03-02T06:00:00.094Z (fraction optional; Z or +00:00)
  kEpochMs,  // integer milliseconds since 1970-01-01T00:00:00Z
  kEpochS,   // seconds since the epoch, fraction allowed (1772431200.594)
  kNone,     // ignore any time in the record: the arrival time is used
};

enum class WeightUnit : std::uint8_t { kGram, kKilogram, kOunce, kPound };
std::optional<WeightUnit> WeightUnitFromName(std::string_view name);  // g kg oz lb, any case
double GramsPer(WeightUnit unit);

enum class HeaderMode : std::uint8_t {
  kNone,   // no header line
  kSkip,   // the first record of each stream is a header: skipped
  kNames,  // the first record names the columns (fields may refer to them by name)
};

// Where a field is found: a column (delimited, 0-based) or a name (delimited
// header name; key of key=value; JSON key, '.' for nested objects).
struct FieldRef {
  std::string name;
  int column = -1;
  bool used() const { return column >= 0 || !name.empty(); }
};

// Which status values mean what. Values compare without regard to ASCII case
// after trimming blanks; a record with no status field is ok.
struct StatusMapping {
  std::vector<std::string> ok = {"", "ok"};
  std::vector<std::string> rejected = {"reject"};
  std::vector<std::string> error = {"error"};
  // A value in none of the lists: nullopt refuses the record (bad_status).
  std::optional<PackStatus> other;
};

struct FormatSettings {
  FormatKind kind = FormatKind::kNative;
  // Fixed line id for every record (a serial port on one checkweigher); empty:
  // each record names its line.
  std::string line_id;
  std::array<FieldRef, kRecordFieldCount> fields;  // indexed by RecordField
  // Delimited text.
  char delimiter = ',';
  bool decimal_comma = false;  // "500,2" means 500.2 (weights only)
  HeaderMode header = HeaderMode::kNone;
  // key=value pairs: pairs are split at pair_separator (runs count as one),
  // keys from values at the first value_separator.
  char pair_separator = ' ';
  char value_separator = '=';
  // Pattern: ECMAScript regular expression with (?<name>...) groups.
  std::string pattern;
  // Weight: grams = raw x scale in `unit` (or the record's unit), + offset_g.
  WeightUnit unit = WeightUnit::kGram;
  double scale = 1.0;
  double offset_g = 0.0;
  TimeFormat time_format = TimeFormat::kAuto;
  StatusMapping status;

  FieldRef& field(RecordField f) { return fields[static_cast<std::size_t>(f)]; }
  const FieldRef& field(RecordField f) const { return fields[static_cast<std::size_t>(f)]; }
};

// Gives key=value and JSON formats their default key names (the field names)
// for fields left unset; the line key only when no line_id is fixed.
void ApplyDefaultKeys(FormatSettings* settings);

}  // namespace heft
