// random_source.cpp — xoshiro256**, splitmix64 and the polar normal method.
#include "core/sim/random_source.h"

#include <cmath>

namespace heft {

namespace {
constexpr std::uint64_t RotateLeft(std::uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }
}  // namespace

std::uint64_t SplitMix64(std::uint64_t* state) {
  std::uint64_t z = (*state += 0x9e3779b97f4a7c15ULL);
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
  return z ^ (z >> 31);
}

std::uint64_t DeriveSeed(std::uint64_t seed, std::uint64_t stream) {
  // Two splitmix64 rounds over seed and stream: nearby seeds/streams land far apart.
  std::uint64_t state = seed;
  std::uint64_t mixed = SplitMix64(&state);
  state = mixed ^ (stream * 0xd1b54a32d192ed03ULL);
  return SplitMix64(&state);
}

RandomSource::RandomSource(std::uint64_t seed) {
  std::uint64_t sm = seed;
  for (auto& word : state_) word = SplitMix64(&sm);
  // splitmix64 cannot give four zero words, so the all-zero state is impossible.
}

std::uint64_t RandomSource::Next() {
  auto& s = state_;
  const std::uint64_t result = RotateLeft(s[1] * 5, 7) * 9;
  const std::uint64_t t = s[1] << 17;
  s[2] ^= s[0];
  s[3] ^= s[1];
  s[1] ^= s[2];
  s[0] ^= s[3];
  s[2] ^= t;
  s[3] = RotateLeft(s[3], 45);
  return result;
}

double RandomSource::Uniform() { return static_cast<double>(Next() >> 11) * 0x1.0p-53; }

double RandomSource::Normal() {
  if (has_spare_) {
    has_spare_ = false;
    return spare_;
  }
  // Marsaglia polar: needs only log and sqrt (no sin/cos), and sqrt is exact in IEEE 754.
  double u = 0.0;
  double v = 0.0;
  double s = 0.0;
  do {
    u = 2.0 * Uniform() - 1.0;
    v = 2.0 * Uniform() - 1.0;
    s = u * u + v * v;
  } while (s >= 1.0 || s == 0.0);
  const double factor = std::sqrt(-2.0 * std::log(s) / s);
  spare_ = v * factor;
  has_spare_ = true;
  return u * factor;
}

}  // namespace heft
