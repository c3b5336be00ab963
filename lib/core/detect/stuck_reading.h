// stuck_reading.h — a frozen sensor or dead channel: the same reading again and again.
//
// Counts consecutive identical readings (exact equality: a live checkweigher's last
// digit moves). Reports when the run reaches `min_run` packs and when it ends.
// `min_run` should make a chance run rare: with a repeat probability p between
// successive readings, a run of r has probability about p^{r−1} (MinRunFor).
// Used by LineMonitor in every phase. Pure; O(1); not thread-safe.
#pragma once

#include <cstdint>

namespace heft {

class StuckReading {
 public:
  explicit StuckReading(int min_run) : min_run_(min_run < 2 ? 2 : min_run) {}

  enum class Event { kNone, kStuck, kReleased };
  Event Update(double grams);
  void Reset() {
    run_ = 0;
    stuck_ = false;
    has_last_ = false;
  }
  void set_min_run(int r) { min_run_ = r < 2 ? 2 : r; }

  int run() const { return run_; }
  bool stuck() const { return stuck_; }
  int min_run() const { return min_run_; }
  double value() const { return last_; }
  // Observed share of packs that repeated the previous reading.
  double RepeatRate() const { return pairs_ ? static_cast<double>(repeats_) / pairs_ : 0.0; }
  // Smallest run r ≥ floor with p^{r−1} ≤ chance.
  static int MinRunFor(double repeat_rate, double chance, int floor);

  // Restart checkpoint (line_monitor_checkpoint.h): the running statistics as plain values;
  // RestoreState(SaveState()) then the same inputs gives the same outputs.
  struct State {
    int min_run = 2, run = 0;
    bool stuck = false;
    double last = 0.0;
    bool has_last = false;
    std::int64_t pairs = 0, repeats = 0;
  };
  State SaveState() const { return {min_run_, run_, stuck_, last_, has_last_, pairs_, repeats_}; }
  void RestoreState(const State& s) {
    set_min_run(s.min_run);
    run_ = s.run;
    stuck_ = s.stuck;
    last_ = s.last;
    has_last_ = s.has_last;
    pairs_ = s.pairs;
    repeats_ = s.repeats;
  }

 private:
  int min_run_;
  int run_ = 0;
  bool stuck_ = false;
  double last_ = 0.0;
  bool has_last_ = false;
  std::int64_t pairs_ = 0, repeats_ = 0;
};

}  // namespace heft
