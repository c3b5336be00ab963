#include "clock.h"

#include <chrono>

namespace heft {

std::int64_t SystemClock::NowMs() const {
  using std::chrono::duration_cast;
  using std::chrono::milliseconds;
  using std::chrono::system_clock;
  return duration_cast<milliseconds>(system_clock::now().time_since_epoch()).count();
}

}  // namespace heft
