#include "backoff.h"

#include <algorithm>

namespace heft {

Backoff::Backoff(std::chrono::milliseconds initial, std::chrono::milliseconds max)
    : initial_(initial), max_(std::max(initial, max)), random_(std::random_device{}()) {}

std::chrono::milliseconds Backoff::Next() {
  // Doubling stops well before overflow: 2^30 x the smallest initial (10 ms)
  // is far above any allowed maximum.
  const int doublings = std::min(attempts_, 30);
  ++attempts_;
  const std::int64_t planned =
      std::min<std::int64_t>(max_.count(), initial_.count() * (std::int64_t{1} << doublings));
  std::uniform_int_distribution<std::int64_t> jitter(planned / 2, planned);
  return std::chrono::milliseconds(jitter(random_));
}

}  // namespace heft
