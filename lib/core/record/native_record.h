// native_record.h — the native feed format (ours): CSV `time,line,head,weight[,status]`.
//
//   time    ISO-8601 UTC with optional fraction (2026-03-02T06:00:00.094Z) or
//           integer epoch milliseconds; may be empty (arrival time is used)
//   line    line id: 1..64 characters of [A-Za-z0-9_.-]
//   head    filler head, a non-negative integer, or empty
//   weight  net weight; grams unless it ends in a unit: g, kg, oz, lb
//   status  optional: ok | reject | error (empty = ok)
//
// The header line `time,line,head,weight` (with optional `,status`) may appear
// at the start of a stream and is not a record. Pure functions; thread-safe.
#pragma once

#include <cstdint>
#include <optional>
#include <string_view>

#include "core/record/record_view.h"

namespace heft {

// Why a record was refused. Stable names via RecordErrorName().
enum class RecordError : std::uint8_t {
  kNone,
  kEmpty,        // nothing but white space
  kBinary,       // control or non-text bytes
  kColumnCount,  // not 4 or 5 comma-separated fields
  kBadTime,
  kBadLine,
  kBadHead,
  kBadWeight,
  kBadUnit,
  kBadStatus,
  kTooLong,  // over the framer's maximum length (reported by the framer's user)
  // Configured (non-native) formats, core/record/record_format.h:
  kMissingField,  // a required field (weight, line) is not in the record
  kNoMatch,       // the record does not match the source's pattern
  kBadSyntax,     // not well-formed for the format (e.g. not a JSON object)
  kTruncated,     // an unterminated record cut off by a disconnect or file rotation
};

std::string_view RecordErrorName(RecordError error);

struct RecordParse {
  RecordError error = RecordError::kNone;
  int field = -1;               // 0-based field (column) where the problem is, or -1
  std::string_view field_name;  // static name (RecordFieldName) for configured formats, or ""
  bool ok() const { return error == RecordError::kNone; }
};

// Parses one record without its terminator into *out (views into `text`).
RecordParse ParseNativeRecord(std::string_view text, RecordView* out);
// The same without the one-pass fast path for the common shape (ISO time, no blanks,
// no unit, no status): what ParseNativeRecord must agree with, for tests and fuzzing.
RecordParse ParseNativeRecordGeneral(std::string_view text, RecordView* out);

// True if `text` is the native header line.
bool IsNativeHeader(std::string_view text);

// True if `text` is a valid line id: 1..64 characters of [A-Za-z0-9_.-].
// Shared with the config loader so both accept the same ids.
bool IsNativeLineId(std::string_view text);

// Parses "500.2", "0.5002kg", "17.6oz", "1.1lb" into grams; nullopt if malformed.
std::optional<double> ParseWeightGrams(std::string_view text);

// Parses ISO-8601 UTC ("2026-03-02T06:00:00.094Z", fraction optional, 'Z' or
// "+00:00") or integer epoch milliseconds; nullopt if malformed.
std::optional<std::int64_t> ParseTimeMs(std::string_view text);

// Formats epoch ms as "2026-03-02T06:00:00.094Z".
void FormatTimeMs(std::int64_t time_ms, char (&buffer)[32]);

}  // namespace heft
