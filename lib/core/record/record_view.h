// record_view.h — one parsed feed record, before it is routed to its line.
//
// Views point into the caller's buffer: they are valid only until the buffer
// the record was parsed from changes. Copy what you keep.
#pragma once

#include <cstdint>
#include <string_view>

#include "core/model/pack.h"

namespace heft {

struct RecordView {
  std::string_view line;    // line id as written in the record
  int head = kNoHead;       // filler head, or kNoHead when the field was empty
  bool has_time = false;    // false: the caller supplies the arrival time
  std::int64_t time_ms = 0; // epoch milliseconds, UTC (valid when has_time)
  double grams = 0.0;       // net weight converted to grams
  PackStatus status = PackStatus::kOk;
};

}  // namespace heft
