#include "core/detect/head_cusum.h"

#include <algorithm>

namespace heft {

HeadCusums::HeadCusums(int heads, double k, double h)
    : k_(k), h_(h), sides_(static_cast<std::size_t>(std::max(0, heads))) {}

void HeadCusums::Reset() {
  for (auto& s : sides_) s = Sums{};
}

std::optional<HeadSignal> HeadCusums::Update(int head, double z, std::int64_t index,
                                             double allowance) {
  if (head < 0 || head >= heads()) return std::nullopt;
  Sums& s = sides_[static_cast<std::size_t>(head)];
  const double k = k_ + std::max(0.0, allowance);
  // Written as selects rather than branches: in control the sums touch zero at random,
  // and a mispredicted branch per side costs more than the whole update.
  const double up = s.up + z - k;
  const bool up_on = up > 0.0;
  s.up_onset = up_on && s.up_run == 0 ? index : s.up_onset;
  s.up_run = up_on ? s.up_run + 1 : 0;
  s.up = up_on ? up : 0.0;
  const double down = s.down - z - k;
  const bool down_on = down > 0.0;
  s.down_onset = down_on && s.down_run == 0 ? index : s.down_onset;
  s.down_run = down_on ? s.down_run + 1 : 0;
  s.down = down_on ? down : 0.0;
  // The quiet case returns at once: building the optional on the stack and copying it
  // out stalled on store forwarding at every pack.
  if (s.up <= h_ && s.down <= h_) return std::nullopt;
  const HeadSignal signal =
      s.up > h_ ? HeadSignal{head, k + s.up / std::max(1, s.up_run), s.up_onset}
                : HeadSignal{head, -k - s.down / std::max(1, s.down_run), s.down_onset};
  s = Sums{};
  return signal;
}

}  // namespace heft
