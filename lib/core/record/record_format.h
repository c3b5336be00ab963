// record_format.h — the interface every record format implements, and the
// factory for the formats of the pure core.
//
// A StreamIngest holds one RecordFormat per stream (formats may keep per-stream
// state: the column names of a header line, the parsed JSON document). Build
// one per source with MakeCoreRecordFormat (or io/record_format_factory.h,
// which adds JSON lines) and Clone() it for each connection; clones share
// what is compiled once (the pattern). Not thread-safe; one per stream.
#pragma once

#include <memory>
#include <string>
#include <string_view>

#include "core/model/status.h"
#include "core/record/format_settings.h"
#include "core/record/native_record.h"
#include "core/record/record_view.h"

namespace heft {

class RecordFormat {
 public:
  virtual ~RecordFormat() = default;

  // The first record of a stream: true if it is a header line (consumed; it
  // takes no record index).
  virtual bool TakeHeader(std::string_view text) = 0;
  // Parses one framed record (terminator removed). Views in *out point into
  // `text` or into this format and are valid until the next call.
  virtual RecordParse Parse(std::string_view text, RecordView* out) = 0;
  // A new stream starts (reconnect, rotated file): forget header state.
  virtual void Reset() {}
  // A fresh copy for another stream, sharing compiled state.
  virtual std::unique_ptr<RecordFormat> Clone() const = 0;
};

// Compiles `settings` into a format. Refuses kJsonLines (that one lives in
// lib/io) and inconsistent settings, saying why (e.g. "pattern: no (?<weight>)
// group"). The message starts with the offending settings key.
Status MakeCoreRecordFormat(const FormatSettings& settings, std::unique_ptr<RecordFormat>* out);

// Checks what every configured format needs: a line (fixed or from a field),
// a weight field, and the format's own rules. Empty string when fine.
std::string CheckFormatSettings(const FormatSettings& settings);

}  // namespace heft
