#include "core/detect/tabular_cusum.h"

#include <algorithm>

namespace heft {

TabularCusum::Signal TabularCusum::Update(double z, std::int64_t index) {
  const double up = upper_ + z - k_;
  if (up > 0.0) {
    if (upper_ <= 0.0 || upper_run_ == 0) upper_onset_ = index;
    ++upper_run_;
    upper_ = up;
  } else {
    upper_ = 0.0;
    upper_run_ = 0;
  }
  const double down = lower_ - z - k_;
  if (down > 0.0) {
    if (lower_ <= 0.0 || lower_run_ == 0) lower_onset_ = index;
    ++lower_run_;
    lower_ = down;
  } else {
    lower_ = 0.0;
    lower_run_ = 0;
  }
  if (upper_ > h_) return Signal::kUp;
  if (lower_ > h_) return Signal::kDown;
  return Signal::kNone;
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
