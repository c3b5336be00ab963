#include "core/detect/tabular_cusum.h"

#include <algorithm>

namespace heft {

TabularCusum::Signal TabularCusum::Update(double z, std::int64_t index) {
  const Signal up = UpdateUpper(z, index);
  const Signal down = UpdateLower(z, index);
  return up != Signal::kNone ? up : down;
}

// Selects rather than branches: in control the sums touch zero at random and
// mispredicted branches would dominate the update.
TabularCusum::Signal TabularCusum::UpdateUpper(double z, std::int64_t index) {
  const double up = upper_ + z - k_;
  const bool up_on = up > 0.0;
  upper_onset_ = up_on && (upper_ <= 0.0 || upper_run_ == 0) ? index : upper_onset_;
  upper_run_ = up_on ? upper_run_ + 1 : 0;
  upper_ = up_on ? up : 0.0;
  return upper_ > h_ ? Signal::kUp : Signal::kNone;
}

TabularCusum::Signal TabularCusum::UpdateLower(double z, std::int64_t index) {
  const double down = lower_ - z - k_;
  const bool down_on = down > 0.0;
  lower_onset_ = down_on && (lower_ <= 0.0 || lower_run_ == 0) ? index : lower_onset_;
  lower_run_ = down_on ? lower_run_ + 1 : 0;
  lower_ = down_on ? down : 0.0;
  return lower_ > h_ ? Signal::kDown : Signal::kNone;
}

void TabularCusum::Reset(double head_start) {
  upper_ = lower_ = std::max(0.0, head_start);
  upper_run_ = lower_run_ = 0;
}

double TabularCusum::EstimatedShift(Signal side) const {
  if (side == Signal::kUp) return k_ + upper_ / std::max(1, upper_run_);
  if (side == Signal::kDown) return -k_ - lower_ / std::max(1, lower_run_);
  return 0.0;
}

}  // namespace heft
