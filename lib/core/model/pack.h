// pack.h — one weighed pack as the core sees it.
//
// A Pack is what a LineMonitor consumes: the line is implied by the monitor
// that receives it. Plain value type; no ownership, thread-agnostic.
#pragma once

#include <cstdint>

namespace heft {

// What the checkweigher said about the pack besides its weight.
enum class PackStatus : std::uint8_t {
  kOk = 0,        // a normal weighing
  kRejected = 1,  // the checkweigher rejected the pack (still weighed)
  kError = 2,     // weighing error: the weight is not to be trusted
};

// Sentinel for "the feed did not name a filler head".
inline constexpr int kNoHead = -1;

struct Pack {
  std::int64_t index = 0;    // 0-based index of the data record in its source stream
  std::int64_t time_ms = 0;  // device time if the record had one, else arrival (epoch ms, UTC)
  double grams = 0.0;        // net weight in grams, as received (after unit conversion)
  int head = kNoHead;        // filler head, or kNoHead
  PackStatus status = PackStatus::kOk;
};

}  // namespace heft
