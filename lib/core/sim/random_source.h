// random_source.h — our own pseudo-random numbers for the feed simulator.
//
// xoshiro256** (Blackman & Vigna, 2018) seeded through splitmix64, with a
// uniform double in [0, 1) and a standard normal from the Marsaglia polar
// method. Written out here rather than taken from <random> so that the same
// seed gives the same numbers on every machine and standard library
// (std::normal_distribution differs between libraries). Used by FeedGenerator
// and the tests. Not thread-safe: one instance per thread.
#pragma once

#include <array>
#include <cstdint>

namespace heft {

// One step of splitmix64: advances *state and returns the next output.
std::uint64_t SplitMix64(std::uint64_t* state);

// A seed for an independent stream `stream` derived from `seed` (so that, e.g.,
// the weight noise and the time jitter of one scenario do not share numbers).
std::uint64_t DeriveSeed(std::uint64_t seed, std::uint64_t stream);

class RandomSource {
 public:
  // The four state words are the first four splitmix64 outputs from `seed`.
  explicit RandomSource(std::uint64_t seed);

  // The next raw 64-bit xoshiro256** output.
  std::uint64_t Next();

  // Uniform in [0, 1): the top 53 bits of Next() scaled by 2^-53.
  double Uniform();

  // Standard normal (mean 0, variance 1), Marsaglia polar method; the second
  // value of each accepted pair is kept for the following call.
  double Normal();

  const std::array<std::uint64_t, 4>& state() const { return state_; }

 private:
  std::array<std::uint64_t, 4> state_{};
  bool has_spare_ = false;
  double spare_ = 0.0;
};

}  // namespace heft
