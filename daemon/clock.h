// clock.h — the daemon's only way to read the wall clock (epoch milliseconds).
//
// A seam so tests can drive heftd's classes with a fake time: everything in
// daemon/ that needs "now" takes a `const Clock&` instead of calling
// std::chrono directly. The core (lib/core) never reads a clock at all.
// Implementations must be callable from the daemon's io_context thread;
// SystemClock is stateless and thread-safe.
#pragma once

#include <cstdint>

namespace heft {

class Clock {
 public:
  virtual ~Clock() = default;
  // Milliseconds since 1970-01-01T00:00:00Z.
  virtual std::int64_t NowMs() const = 0;
};

// The real wall clock (std::chrono::system_clock).
class SystemClock final : public Clock {
 public:
  std::int64_t NowMs() const override;
};

}  // namespace heft
