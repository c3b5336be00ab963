// native_record.cpp — parser for the native CSV feed format (see native_record.h).
//
// Hot path: called once per pack at line rate, so it allocates nothing, uses no
// locale and no regex. Integers and doubles go through std::from_chars.
#include "core/record/native_record.h"

#include <array>
#include <bit>
#include <charconv>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstring>
#include <system_error>
#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace heft {
namespace {

constexpr std::int64_t kMsPerDay = 86'400'000;
constexpr std::size_t kMaxLineIdLength = 64;
constexpr int kMaxHead = 999;  // heads are 0..999
constexpr std::size_t kMaxFields = 5;

// Exact definitions: 1 lb = 0.45359237 kg (international avoirdupois pound,
// 1959 agreement); 1 oz = 1/16 lb = 28.349523125 g.
constexpr double kGramsPerKilogram = 1000.0;
constexpr double kGramsPerOunce = 28.349523125;
constexpr double kGramsPerPound = 453.59237;

// Largest time ParseTimeMs accepts as epoch ms: 9999-12-31T23:59:59.999Z, so
// that every accepted time formats back with a four-digit year.
constexpr std::int64_t kMaxEpochMs = 253'402'300'799'999;

bool IsSpace(char c) { return c == ' ' || c == '\t'; }
bool IsDigit(char c) { return c >= '0' && c <= '9'; }

std::string_view Trim(std::string_view s) {
  // Fields seldom carry blanks: one look at each end settles most of them.
  if (!s.empty() && !IsSpace(s.front()) && !IsSpace(s.back())) return s;
  while (!s.empty() && IsSpace(s.front())) s.remove_prefix(1);
  while (!s.empty() && IsSpace(s.back())) s.remove_suffix(1);
  return s;
}

// Days since 1970-01-01 for a proleptic Gregorian date (Howard Hinnant,
// "chrono-Compatible Low-Level Date Algorithms", days_from_civil).
std::int64_t DaysFromCivil(std::int64_t y, unsigned m, unsigned d) {
  y -= m <= 2 ? 1 : 0;
  const std::int64_t era = (y >= 0 ? y : y - 399) / 400;
  const auto yoe = static_cast<unsigned>(y - era * 400);                 // [0, 399]
  const unsigned doy = (153 * (m > 2 ? m - 3 : m + 9) + 2) / 5 + d - 1;  // [0, 365]
  const unsigned doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;            // [0, 146096]
  return era * 146097 + static_cast<std::int64_t>(doe) - 719468;
}

// Inverse of DaysFromCivil (same source, civil_from_days).
void CivilFromDays(std::int64_t z, std::int64_t* y, unsigned* m, unsigned* d) {
  z += 719468;
  const std::int64_t era = (z >= 0 ? z : z - 146096) / 146097;
  const auto doe = static_cast<unsigned>(z - era * 146097);                    // [0, 146096]
  const unsigned yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;  // [0, 399]
  const unsigned doy = doe - (365 * yoe + yoe / 4 - yoe / 100);                // [0, 365]
  const unsigned mp = (5 * doy + 2) / 153;                                     // [0, 11]
  *d = doy - (153 * mp + 2) / 5 + 1;
  *m = mp < 10 ? mp + 3 : mp - 9;
  *y = static_cast<std::int64_t>(yoe) + era * 400 + (*m <= 2 ? 1 : 0);
}

bool IsLeapYear(int y) { return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0; }

int DaysInMonth(int y, int m) {
  static constexpr std::array<int, 12> kDays = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
  return m == 2 && IsLeapYear(y) ? 29 : kDays[static_cast<std::size_t>(m - 1)];
}

// Reads exactly `n` digits at s[pos]; false if any is not a digit.
bool Digits(std::string_view s, std::size_t pos, std::size_t n, int* value) {
  if (pos + n > s.size()) return false;
  int v = 0;
  for (std::size_t i = pos; i < pos + n; ++i) {
    if (!IsDigit(s[i])) return false;
    v = v * 10 + (s[i] - '0');
  }
  *value = v;
  return true;
}

// "YYYY-MM-DDTHH:MM:SS[.f{1,9}](Z|+00:00)". The time parsers return a flag and write
// through a pointer: std::optional<int64_t> came back through the stack with a
// one-byte store read as eight, a store-forwarding stall on every record.
// A feed's records mostly share the minute of the one before: the last valid
// "YYYY-MM-DDTHH:MM" prefix and its epoch time are kept (per thread, so the parser
// stays a plain function; the result is the same with or without it).
struct MinuteMemo {
  char prefix[16] = {};
  std::int64_t base_ms = 0;
  bool valid = false;
};
thread_local MinuteMemo minute_memo;

bool ParseIsoTime(std::string_view s, std::int64_t* time_ms) {
  if (s.size() < 20) return false;
  std::int64_t base_ms;
  int second;
  if (minute_memo.valid && std::memcmp(s.data(), minute_memo.prefix, 16) == 0) {
    base_ms = minute_memo.base_ms;
    if (s[16] != ':' || !Digits(s, 17, 2, &second)) return false;
  } else {
    int year, month, day, hour, minute;
    if (!Digits(s, 0, 4, &year) || s[4] != '-' || !Digits(s, 5, 2, &month) || s[7] != '-' ||
        !Digits(s, 8, 2, &day) || s[10] != 'T' || !Digits(s, 11, 2, &hour) || s[13] != ':' ||
        !Digits(s, 14, 2, &minute) || s[16] != ':' || !Digits(s, 17, 2, &second)) {
      return false;
    }
    if (month < 1 || month > 12 || day < 1 || day > DaysInMonth(year, month) || hour > 23 ||
        minute > 59) {
      return false;
    }
    const std::int64_t days =
        DaysFromCivil(year, static_cast<unsigned>(month), static_cast<unsigned>(day));
    base_ms = days * kMsPerDay + (hour * 60 + minute) * std::int64_t{60'000};
    std::memcpy(minute_memo.prefix, s.data(), 16);
    minute_memo.base_ms = base_ms;
    minute_memo.valid = true;
  }
  // Leap seconds (:60) are refused: epoch time has no place for them.
  if (second > 59) return false;
  // The usual tail, ".fffZ", read straight.
  if (s.size() == 24 && s[19] == '.' && s[23] == 'Z' && IsDigit(s[20]) && IsDigit(s[21]) &&
      IsDigit(s[22])) {
    *time_ms = base_ms + second * std::int64_t{1000} +
               ((s[20] - '0') * 100 + (s[21] - '0') * 10 + (s[22] - '0'));
    return true;
  }
  std::size_t pos = 19;
  int millis = 0;
  if (s[pos] == '.') {
    ++pos;
    std::size_t digits = 0;
    while (pos < s.size() && IsDigit(s[pos])) {
      if (digits < 3) millis = millis * 10 + (s[pos] - '0');
      ++digits;
      ++pos;
    }
    if (digits == 0 || digits > 9) return false;
    for (std::size_t i = digits; i < 3; ++i) millis *= 10;  // ".5" is 500 ms
  }
  const std::string_view zone = s.substr(pos);
  if (zone != "Z" && zone != "+00:00") return false;
  *time_ms = base_ms + second * std::int64_t{1000} + millis;
  return true;
}

bool ParseEpochMs(std::string_view s, std::int64_t* time_ms) {
  if (s.empty() || s.size() > 15) return false;  // kMaxEpochMs has 15 digits
  for (char c : s) {
    if (!IsDigit(c)) return false;
  }
  std::int64_t value = 0;
  const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), value);
  if (ec != std::errc() || end != s.data() + s.size() || value > kMaxEpochMs) return false;
  *time_ms = value;
  return true;
}

bool ParseTimeInto(std::string_view text, std::int64_t* time_ms) {
  if (text.size() > 4 && text[4] == '-') return ParseIsoTime(text, time_ms);
  return ParseEpochMs(text, time_ms);
}

enum class WeightError { kNone, kNumber, kUnit };

// Clinger's fast path for the common "-ddd.dd": with at most 15 significant digits
// the digits form an exact integer, 10^f is exact for f <= 15, and one IEEE division
// of two exact values is correctly rounded, so the result equals std::from_chars's.
// Returns the characters used, or 0 when the text needs the general parser.
std::size_t ParsePlainDecimal(std::string_view s, double* value) {
  static constexpr double kPow10[] = {1e0, 1e1, 1e2,  1e3,  1e4,  1e5,  1e6,  1e7,
                                      1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15};
  const char* p = s.data();
  const char* const end = p + s.size();
  const bool negative = p < end && *p == '-';
  if (negative) ++p;
  // Unsigned, so that a long run of digits wraps harmlessly before the count check.
  std::uint64_t mantissa = 0;
  const char* const int_start = p;
  while (p < end && static_cast<unsigned char>(*p - '0') < 10) {
    mantissa = mantissa * 10 + static_cast<unsigned>(*p - '0');
    ++p;
  }
  const std::size_t int_digits = static_cast<std::size_t>(p - int_start);
  if (int_digits == 0) return 0;  // ".5", "-": the general parser decides
  std::size_t fraction_digits = 0;
  if (p < end && *p == '.') {
    const char* const frac_start = ++p;
    while (p < end && static_cast<unsigned char>(*p - '0') < 10) {
      mantissa = mantissa * 10 + static_cast<unsigned>(*p - '0');
      ++p;
    }
    fraction_digits = static_cast<std::size_t>(p - frac_start);
    if (fraction_digits == 0) return 0;  // "5."
  }
  if (int_digits + fraction_digits > 15) return 0;
  if (p < end && (*p == 'e' || *p == 'E')) return 0;
  // At most 15 digits: exact as a signed integer, which converts in one instruction.
  const double magnitude =
      static_cast<double>(static_cast<std::int64_t>(mantissa)) / kPow10[fraction_digits];
  *value = negative ? -magnitude : magnitude;
  return static_cast<std::size_t>(p - s.data());
}

WeightError ParseWeight(std::string_view s, double* grams) {
  s = Trim(s);
  if (s.empty()) return WeightError::kNumber;
  // from_chars takes a '-' but not a '+'; it also takes "inf"/"nan", which the
  // leading-character check and isfinite below refuse.
  const char first = s.front();
  if (!IsDigit(first) && first != '-' && first != '.') return WeightError::kNumber;
  double value = 0.0;
  std::size_t used = ParsePlainDecimal(s, &value);
  if (used == 0) {
    const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), value);
    if (ec != std::errc() || !std::isfinite(value)) return WeightError::kNumber;
    used = static_cast<std::size_t>(end - s.data());
  }
  std::string_view unit = Trim(s.substr(used));
  if (unit.empty()) {  // grams, the common case
    *grams = value;
    return WeightError::kNone;
  }
  if (unit.empty() || unit == "g") {
    *grams = value;
  } else if (unit == "kg") {
    *grams = value * kGramsPerKilogram;
  } else if (unit == "oz") {
    *grams = value * kGramsPerOunce;
  } else if (unit == "lb") {
    *grams = value * kGramsPerPound;
  } else {
    // "500 mg" names a unit we do not know; "500.2.3" is a malformed number.
    for (char c : unit) {
      if (!((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z'))) return WeightError::kNumber;
    }
    return WeightError::kUnit;
  }
  if (!std::isfinite(*grams)) return WeightError::kNumber;  // e.g. 1e308 lb
  return WeightError::kNone;
}

// A table, since every record's line id is checked character by character.
constexpr std::array<bool, 256> kLineIdChars = [] {
  std::array<bool, 256> table{};
  for (int c = 0; c < 256; ++c) {
    table[static_cast<std::size_t>(c)] = (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') ||
                                         (c >= '0' && c <= '9') || c == '_' || c == '.' || c == '-';
  }
  return table;
}();

bool IsLineIdChar(char c) { return kLineIdChars[static_cast<unsigned char>(c)]; }

bool ParseHead(std::string_view s, int* head) {
  s = Trim(s);
  if (s.empty()) {
    *head = kNoHead;
    return true;
  }
  int value = 0;
  for (char c : s) {
    if (!IsDigit(c)) return false;
    value = value * 10 + (c - '0');
    if (value > kMaxHead) return false;  // also keeps `value` from overflowing
  }
  *head = value;
  return true;
}

bool ParseStatus(std::string_view s, PackStatus* status) {
  if (s.empty() || s == "ok") {
    *status = PackStatus::kOk;
  } else if (s == "reject") {
    *status = PackStatus::kRejected;
  } else if (s == "error") {
    *status = PackStatus::kError;
  } else {
    return false;
  }
  return true;
}

// One pass over the record, eight bytes at a time: refuses control characters other
// than tab, DEL and non-ASCII bytes ("has a byte less than / greater than n" word
// tricks, exact for these n; a word that trips them is checked byte by byte, since tab
// is allowed), and notes where fields start (exact per-byte comma mask, no carries
// between bytes). Returns false for a binary record; `fields` counts commas + 1 (it
// stops counting past `kMaxFields`).
static_assert(std::endian::native == std::endian::little, "ScanFields reads words little-endian");
bool ScanFields(std::string_view text, std::array<std::size_t, kMaxFields + 1>* starts,
                std::size_t* fields) {
  constexpr std::uint64_t kOnes = 0x0101010101010101ULL, kHighs = 0x8080808080808080ULL;
  constexpr std::uint64_t kLows = 0x7F7F7F7F7F7F7F7FULL;
  auto byte_bad = [](unsigned char c) { return (c < 0x20 && c != '\t') || c >= 0x7F; };
  std::size_t count = 1;
  auto note_comma = [&](std::size_t at) {
    if (count <= kMaxFields) (*starts)[count] = at + 1;
    ++count;
  };
  std::size_t i = 0;
  for (; i + 8 <= text.size(); i += 8) {
    std::uint64_t x;
    std::memcpy(&x, text.data() + i, 8);
    const std::uint64_t below_space = (x - kOnes * 0x20) & ~x & kHighs;
    const std::uint64_t above_tilde = ((x + kOnes * (127 - 0x7E)) | x) & kHighs;
    if ((below_space | above_tilde) != 0) {
      for (std::size_t j = i; j < i + 8; ++j) {
        if (byte_bad(static_cast<unsigned char>(text[j]))) return false;
      }
    }
    const std::uint64_t y = x ^ (kOnes * ',');  // comma bytes become zero
    std::uint64_t commas = ~(((y & kLows) + kLows) | y | kLows);
    while (commas != 0 && count <= kMaxFields) {  // little-endian: lowest byte first
      note_comma(i + static_cast<std::size_t>(std::countr_zero(commas)) / 8);
      commas &= commas - 1;
    }
  }
  for (; i < text.size(); ++i) {
    const auto c = static_cast<unsigned char>(text[i]);
    if (byte_bad(c)) return false;
    if (c == ',' && count <= kMaxFields) note_comma(i);
  }
  *fields = count;
  return true;
}

RecordParse Fail(RecordError error, int field) { return RecordParse{error, field, {}}; }

void PutDigits(char*& p, std::int64_t value, int width) {
  char* end = p + width;
  for (char* q = end; q != p;) {
    *--q = static_cast<char>('0' + value % 10);
    value /= 10;
  }
  p = end;
}

}  // namespace

std::string_view RecordErrorName(RecordError error) {
  switch (error) {
    case RecordError::kNone:
      return "none";
    case RecordError::kEmpty:
      return "empty";
    case RecordError::kBinary:
      return "binary";
    case RecordError::kColumnCount:
      return "column_count";
    case RecordError::kBadTime:
      return "bad_time";
    case RecordError::kBadLine:
      return "bad_line";
    case RecordError::kBadHead:
      return "bad_head";
    case RecordError::kBadWeight:
      return "bad_weight";
    case RecordError::kBadUnit:
      return "bad_unit";
    case RecordError::kBadStatus:
      return "bad_status";
    case RecordError::kTooLong:
      return "too_long";
    case RecordError::kMissingField:
      return "missing_field";
    case RecordError::kNoMatch:
      return "no_match";
    case RecordError::kBadSyntax:
      return "bad_syntax";
    case RecordError::kTruncated:
      return "truncated";
  }
  return "unknown";
}

// The shape nearly every record of a live feed has, "ISO-time,line,head,weight" with
// no blanks, no unit and no status, read in one pass with the same field parsers as
// below. Anything else (or anything wrong) returns false and the general path
// decides, so a record this accepts is one that path accepts with the same fields.
#if defined(__SSE2__)
// Bytes of x in [lo, hi] as 0xFF (ASCII bounds: bytes from 0x80 up are negative as
// signed bytes and fall outside every range).
inline __m128i InRange(__m128i x, char lo, char hi) {
  return _mm_and_si128(_mm_cmpgt_epi8(x, _mm_set1_epi8(static_cast<char>(lo - 1))),
                       _mm_cmpgt_epi8(_mm_set1_epi8(static_cast<char>(hi + 1)), x));
}
inline unsigned Bits(__m128i mask) { return static_cast<unsigned>(_mm_movemask_epi8(mask)); }

// The common line id and head ("line,head,") from sixteen bytes at once: the bytes
// before the first comma must all be line-id characters (kLineIdChars) and those
// between the first and second comma digits. Returns false when the two commas are
// not both within the sixteen bytes (the scalar scan decides then), else sets *ok.
inline bool LineAndHeadBlock(const char* p, std::size_t* line_len, std::size_t* head_end,
                             bool* ok) {
  const __m128i x = _mm_loadu_si128(reinterpret_cast<const __m128i*>(p));
  const unsigned comma = Bits(_mm_cmpeq_epi8(x, _mm_set1_epi8(',')));
  const unsigned first = comma & (0u - comma);  // lowest set bit
  const unsigned second = comma & ~(first | (first - 1));
  if (first == 0 || second == 0) return false;
  // Line-id characters: letters (either case, folded by OR 0x20), '-' to '9' except
  // '/' (that is "-.0123456789"), and '_'.
  const __m128i digit = InRange(x, '0', '9');
  const __m128i letter = InRange(_mm_or_si128(x, _mm_set1_epi8(0x20)), 'a', 'z');
  const __m128i dash_to_nine =
      _mm_andnot_si128(_mm_cmpeq_epi8(x, _mm_set1_epi8('/')), InRange(x, '-', '9'));
  const unsigned id =
      Bits(_mm_or_si128(_mm_or_si128(letter, dash_to_nine), _mm_cmpeq_epi8(x, _mm_set1_epi8('_'))));
  const unsigned digits = Bits(digit);
  const unsigned before_first = first - 1;
  const unsigned head_bits = (second - 1) & ~(first | before_first);
  *line_len = static_cast<std::size_t>(std::countr_zero(first));
  *head_end = static_cast<std::size_t>(std::countr_zero(second));
  *ok = before_first != 0 && (id & before_first) == before_first && head_bits != 0 &&
        (digits & head_bits) == head_bits;
  return true;
}
#endif

bool ParseCommonShape(std::string_view text, RecordView* out) {
  const std::size_t n = text.size();
  if (n < 26 || text[4] != '-') return false;  // 20-char time, then ",l,h,w" at least
  // Time: up to the first comma (an ISO time holds none); at 24 for ".fffZ".
  std::size_t i = 24;
  if (text[24] != ',') {
    i = 20;
    while (i < n && text[i] != ',') ++i;
  }
  if (i >= n || !ParseIsoTime(text.substr(0, i), &out->time_ms)) return false;
  const std::size_t line_start = ++i;
  std::size_t head_start = 0;
  bool scanned = false;
#if defined(__SSE2__)
  std::size_t line_len = 0, head_end = 0;
  bool ok = false;
  if (line_start + 16 <= n &&
      LineAndHeadBlock(text.data() + line_start, &line_len, &head_end, &ok)) {
    if (!ok) return false;
    out->line = text.substr(line_start, line_len);
    head_start = line_start + line_len + 1;
    i = line_start + head_end;
    scanned = true;
  }
#endif
  if (!scanned) {
    // Line id: line-id characters up to the next comma.
    while (i < n && IsLineIdChar(text[i])) ++i;
    if (i >= n || text[i] != ',' || i == line_start || i - line_start > kMaxLineIdLength) {
      return false;
    }
    out->line = text.substr(line_start, i - line_start);
    // Head: one or more digits up to the next comma.
    head_start = ++i;
    while (i < n && IsDigit(text[i])) ++i;
    if (i >= n || text[i] != ',' || i == head_start) return false;
  }
  int head = 0;
  for (std::size_t k = head_start; k < i; ++k) {
    head = head * 10 + (text[k] - '0');
    if (head > kMaxHead) return false;
  }
  out->head = head;
  // Weight: a plain decimal that ends the record.
  const std::string_view weight = text.substr(i + 1);
  if (weight.empty() || (!IsDigit(weight.front()) && weight.front() != '-')) return false;
  if (ParsePlainDecimal(weight, &out->grams) != weight.size()) return false;
  out->has_time = true;
  out->status = PackStatus::kOk;
  return true;
}

RecordParse ParseNativeRecord(std::string_view text, RecordView* out) {
  if (RecordView fast; ParseCommonShape(text, &fast)) {
    *out = fast;
    return RecordParse{};
  }
  return ParseNativeRecordGeneral(text, out);
}

RecordParse ParseNativeRecordGeneral(std::string_view text, RecordView* out) {
  std::array<std::size_t, kMaxFields + 1> starts{};
  std::size_t fields = 1;
  if (!ScanFields(text, &starts, &fields)) return Fail(RecordError::kBinary, -1);
  if (fields == 1 && Trim(text).empty()) return Fail(RecordError::kEmpty, -1);
  if (fields != 4 && fields != 5) return Fail(RecordError::kColumnCount, -1);
  starts[fields] = text.size() + 1;  // as if a comma followed the last field
  auto field = [&](std::size_t k) { return text.substr(starts[k], starts[k + 1] - 1 - starts[k]); };

  RecordView record;
  const std::string_view time = Trim(field(0));
  if (!time.empty()) {
    if (!ParseTimeInto(time, &record.time_ms)) return Fail(RecordError::kBadTime, 0);
    record.has_time = true;
  }
  record.line = field(1);
  if (!IsNativeLineId(record.line)) return Fail(RecordError::kBadLine, 1);
  if (!ParseHead(field(2), &record.head)) return Fail(RecordError::kBadHead, 2);
  switch (ParseWeight(field(3), &record.grams)) {
    case WeightError::kNone:
      break;
    case WeightError::kNumber:
      return Fail(RecordError::kBadWeight, 3);
    case WeightError::kUnit:
      return Fail(RecordError::kBadUnit, 3);
  }
  if (fields == 5 && !ParseStatus(field(4), &record.status)) {
    return Fail(RecordError::kBadStatus, 4);
  }
  *out = record;
  return RecordParse{};
}

bool IsNativeLineId(std::string_view text) {
  if (text.empty() || text.size() > kMaxLineIdLength) return false;
  for (char c : text) {
    if (!IsLineIdChar(c)) return false;
  }
  return true;
}

bool IsNativeHeader(std::string_view text) {
  while (!text.empty() && (IsSpace(text.back()) || text.back() == '\r')) text.remove_suffix(1);
  return text == "time,line,head,weight" || text == "time,line,head,weight,status";
}

std::optional<double> ParseWeightGrams(std::string_view text) {
  double grams = 0.0;
  if (ParseWeight(text, &grams) != WeightError::kNone) return std::nullopt;
  return grams;
}

std::optional<std::int64_t> ParseTimeMs(std::string_view text) {
  std::int64_t time_ms = 0;
  if (!ParseTimeInto(text, &time_ms)) return std::nullopt;
  return time_ms;
}

void FormatTimeMs(std::int64_t time_ms, char (&buffer)[32]) {
  // Floor division, so times before 1970 format correctly too.
  std::int64_t days = time_ms / kMsPerDay;
  std::int64_t ms_of_day = time_ms % kMsPerDay;
  if (ms_of_day < 0) {
    ms_of_day += kMsPerDay;
    --days;
  }
  std::int64_t year;
  unsigned month, day;
  CivilFromDays(days, &year, &month, &day);

  char* p = buffer;
  // Years outside 0000..9999 use the ISO 8601 expanded form (+YYYYY / -YYYY);
  // the widest, about +292278994, still fits the buffer.
  if (year < 0) {
    *p++ = '-';
    year = -year;
  } else if (year > 9999) {
    *p++ = '+';
  }
  int year_digits = 4;
  for (std::int64_t y = year; y >= 10'000; y /= 10) ++year_digits;
  PutDigits(p, year, year_digits);
  *p++ = '-';
  PutDigits(p, month, 2);
  *p++ = '-';
  PutDigits(p, day, 2);
  *p++ = 'T';
  PutDigits(p, ms_of_day / 3'600'000, 2);
  *p++ = ':';
  PutDigits(p, ms_of_day / 60'000 % 60, 2);
  *p++ = ':';
  PutDigits(p, ms_of_day / 1000 % 60, 2);
  *p++ = '.';
  PutDigits(p, ms_of_day % 1000, 3);
  *p++ = 'Z';
  *p = '\0';
}

}  // namespace heft
