// record_fields.cpp — see record_fields.h. Hot path for configured formats:
// no allocation, no locale, numbers through std::from_chars.
#include "core/record/record_fields.h"

#include <charconv>
#include <cmath>
#include <system_error>

namespace heft {
namespace {

constexpr int kMaxHead = 999;  // as the native format
constexpr std::size_t kMaxNumberChars = 64;
// Largest time accepted (9999-12-31T23:59:59.999Z), as the native format.
constexpr std::int64_t kMaxEpochMs = 253'402'300'799'999;

bool IsBlank(char c) { return c == ' ' || c == '\t'; }
bool IsDigit(char c) { return c >= '0' && c <= '9'; }
char Lower(char c) { return c >= 'A' && c <= 'Z' ? static_cast<char>(c - 'A' + 'a') : c; }

bool ReadHead(std::string_view text, int* head) {
  text = TrimBlanks(text);
  if (text.empty()) {
    *head = kNoHead;
    return true;
  }
  int value = 0;
  for (char c : text) {
    if (!IsDigit(c)) return false;
    value = value * 10 + (c - '0');
    if (value > kMaxHead) return false;
  }
  *head = value;
  return true;
}

bool AllDigits(std::string_view s) {
  if (s.empty()) return false;
  for (char c : s) {
    if (!IsDigit(c)) return false;
  }
  return true;
}

// "1772431200", "1772431200.5", "1772431200.594123" (extra digits truncated).
std::optional<std::int64_t> ParseEpochSeconds(std::string_view s) {
  const std::size_t dot = s.find('.');
  const std::string_view whole = s.substr(0, dot);
  if (!AllDigits(whole) || whole.size() > 12) return std::nullopt;
  std::int64_t seconds = 0;
  std::from_chars(whole.data(), whole.data() + whole.size(), seconds);
  std::int64_t millis = 0;
  if (dot != std::string_view::npos) {
    const std::string_view fraction = s.substr(dot + 1);
    if (!AllDigits(fraction) || fraction.size() > 9) return std::nullopt;
    for (std::size_t i = 0; i < 3; ++i) {
      millis = millis * 10 + (i < fraction.size() ? fraction[i] - '0' : 0);
    }
  }
  const std::int64_t ms = seconds * 1000 + millis;
  if (ms > kMaxEpochMs) return std::nullopt;
  return ms;
}

}  // namespace

std::string_view TrimBlanks(std::string_view s) {
  while (!s.empty() && IsBlank(s.front())) s.remove_prefix(1);
  while (!s.empty() && IsBlank(s.back())) s.remove_suffix(1);
  return s;
}

bool EqualsIgnoreCase(std::string_view a, std::string_view b) {
  if (a.size() != b.size()) return false;
  for (std::size_t i = 0; i < a.size(); ++i) {
    if (Lower(a[i]) != Lower(b[i])) return false;
  }
  return true;
}

bool HasControlBytes(std::string_view text) {
  for (char ch : text) {
    const auto c = static_cast<unsigned char>(ch);
    if ((c < 0x20 && c != '\t') || c == 0x7F) return true;
  }
  return false;
}

RecordError ReadWeight(std::string_view text, std::optional<std::string_view> unit_text,
                       const FormatSettings& settings, double* grams) {
  text = TrimBlanks(text);
  // Indicators often print the sign apart from the digits: "+   500.2 g".
  bool negative = false;
  if (!text.empty() && (text.front() == '+' || text.front() == '-')) {
    negative = text.front() == '-';
    text = TrimBlanks(text.substr(1));
  }
  std::size_t end = 0;
  while (end < text.size() && (IsDigit(text[end]) || text[end] == '.' || text[end] == ',' ||
                               text[end] == 'e' || text[end] == 'E' ||
                               ((text[end] == '+' || text[end] == '-') && end > 0 &&
                                (text[end - 1] == 'e' || text[end - 1] == 'E')))) {
    ++end;
  }
  const std::string_view number = text.substr(0, end);
  if (number.empty() || number.size() > kMaxNumberChars ||
      !(IsDigit(number[0]) || number[0] == '.')) {
    return RecordError::kBadWeight;
  }
  char buffer[kMaxNumberChars];
  for (std::size_t i = 0; i < number.size(); ++i) {
    char c = number[i];
    if (c == ',') {
      if (!settings.decimal_comma) return RecordError::kBadWeight;
      c = '.';
    } else if (c == '.' && settings.decimal_comma) {
      return RecordError::kBadWeight;  // "1.234,5" thousands separators are not read
    }
    buffer[i] = c;
  }
  double value = 0.0;
  const auto [stop, ec] = std::from_chars(buffer, buffer + number.size(), value);
  if (ec != std::errc() || stop != buffer + number.size() || !std::isfinite(value)) {
    return RecordError::kBadWeight;
  }
  if (negative) value = -value;
  WeightUnit unit = settings.unit;
  const std::string_view suffix = TrimBlanks(text.substr(end));
  if (!suffix.empty()) {
    const auto named = WeightUnitFromName(suffix);
    if (!named) {
      for (char c : suffix) {
        if (!((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z'))) return RecordError::kBadWeight;
      }
      return RecordError::kBadUnit;
    }
    unit = *named;
  } else if (unit_text && !TrimBlanks(*unit_text).empty()) {
    const auto named = WeightUnitFromName(TrimBlanks(*unit_text));
    if (!named) return RecordError::kBadUnit;
    unit = *named;
  }
  const double result = value * settings.scale * GramsPer(unit) + settings.offset_g;
  if (!std::isfinite(result)) return RecordError::kBadWeight;
  *grams = result;
  return RecordError::kNone;
}

bool ReadTime(std::string_view text, TimeFormat format, bool* has_time, std::int64_t* time_ms) {
  text = TrimBlanks(text);
  *has_time = false;
  if (text.empty() || format == TimeFormat::kNone) return true;
  std::optional<std::int64_t> ms;
  switch (format) {
    case TimeFormat::kAuto:
      ms = ParseTimeMs(text);
      break;
    case TimeFormat::kIso8601:
      if (text.size() > 4 && text[4] == '-') ms = ParseTimeMs(text);
      break;
    case TimeFormat::kEpochMs:
      if (AllDigits(text)) ms = ParseTimeMs(text);
      break;
    case TimeFormat::kEpochS:
      ms = ParseEpochSeconds(text);
      break;
    case TimeFormat::kNone:
      break;
  }
  if (!ms) return false;
  *has_time = true;
  *time_ms = *ms;
  return true;
}

bool ReadStatus(std::string_view text, const StatusMapping& mapping, PackStatus* status) {
  text = TrimBlanks(text);
  auto in = [&](const std::vector<std::string>& values) {
    for (const std::string& v : values) {
      if (EqualsIgnoreCase(text, v)) return true;
    }
    return false;
  };
  if (in(mapping.ok)) {
    *status = PackStatus::kOk;
  } else if (in(mapping.rejected)) {
    *status = PackStatus::kRejected;
  } else if (in(mapping.error)) {
    *status = PackStatus::kError;
  } else if (mapping.other) {
    *status = *mapping.other;
  } else {
    return false;
  }
  return true;
}

RecordParse FillRecord(const FormatSettings& settings, const FieldTexts& texts,
                       const FieldColumns& columns, RecordView* out) {
  auto fail = [&](RecordError error, RecordField f) {
    RecordParse parse;
    parse.error = error;
    parse.field = columns[static_cast<std::size_t>(f)];
    parse.field_name = RecordFieldName(f);
    return parse;
  };
  auto text = [&](RecordField f) { return texts[static_cast<std::size_t>(f)]; };

  RecordView record;
  if (!settings.line_id.empty()) {
    record.line = settings.line_id;
  } else {
    const auto line = text(RecordField::kLine);
    if (!line) return fail(RecordError::kMissingField, RecordField::kLine);
    record.line = TrimBlanks(*line);
    if (!IsNativeLineId(record.line)) return fail(RecordError::kBadLine, RecordField::kLine);
  }
  const auto weight = text(RecordField::kWeight);
  if (!weight) return fail(RecordError::kMissingField, RecordField::kWeight);
  const RecordError weight_error =
      ReadWeight(*weight, text(RecordField::kUnit), settings, &record.grams);
  if (weight_error != RecordError::kNone) {
    // A bad unit field is reported against the unit field.
    const bool unit_field = weight_error == RecordError::kBadUnit &&
                            text(RecordField::kUnit).has_value() &&
                            !TrimBlanks(*text(RecordField::kUnit)).empty();
    return fail(weight_error, unit_field ? RecordField::kUnit : RecordField::kWeight);
  }
  if (const auto head = text(RecordField::kHead); head && !ReadHead(*head, &record.head)) {
    return fail(RecordError::kBadHead, RecordField::kHead);
  }
  if (const auto time = text(RecordField::kTime);
      time && !ReadTime(*time, settings.time_format, &record.has_time, &record.time_ms)) {
    return fail(RecordError::kBadTime, RecordField::kTime);
  }
  if (const auto status = text(RecordField::kStatus);
      status && !ReadStatus(*status, settings.status, &record.status)) {
    return fail(RecordError::kBadStatus, RecordField::kStatus);
  }
  *out = record;
  return RecordParse{};
}

}  // namespace heft
