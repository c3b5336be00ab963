#include "core/detect/stuck_reading.h"

#include <algorithm>
#include <cmath>

namespace heft {

StuckReading::Event StuckReading::Update(double grams) {
  Event e = Event::kNone;
  if (run_ > 0 && grams == last_) {
    ++run_;
    ++repeats_;
  } else {
    if (stuck_) e = Event::kReleased;
    stuck_ = false;
    run_ = 1;
  }
  if (has_last_) ++pairs_;
  has_last_ = true;
  last_ = grams;
  if (!stuck_ && run_ >= min_run_) {
    stuck_ = true;
    e = Event::kStuck;
  }
  return e;
}

int StuckReading::MinRunFor(double repeat_rate, double chance, int floor) {
  if (!(repeat_rate > 0.0)) return floor;
  if (repeat_rate >= 0.9) return std::max(floor, 200);
  const double r = 1.0 + std::log(chance) / std::log(repeat_rate);
  return std::max(floor, static_cast<int>(std::ceil(r)));
}

}  // namespace heft
