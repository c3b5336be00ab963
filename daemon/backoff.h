// backoff.h — exponential backoff with jitter for reconnecting sources.
//
// Attempt n (0-based) waits a random time in [d/2, d], d = min(max, initial
// x 2^n): "equal jitter", so that many sources cut off together do not all
// come back in the same millisecond, yet none retries much sooner than
// planned. Reset() after a success. Not thread-safe; one per source.
#pragma once

#include <chrono>
#include <cstdint>
#include <random>

namespace heft {

class Backoff {
 public:
  Backoff(std::chrono::milliseconds initial, std::chrono::milliseconds max);

  // The wait before the next attempt; counts the attempt.
  std::chrono::milliseconds Next();
  void Reset() { attempts_ = 0; }
  int attempts() const { return attempts_; }

 private:
  std::chrono::milliseconds initial_;
  std::chrono::milliseconds max_;
  int attempts_ = 0;
  std::mt19937_64 random_;
};

}  // namespace heft
