// head_cusum.h — one two-sided tabular CUSUM per filler head, on that head's
// standardised residuals (pack − line level − head offset) / σ.
//
// A head that fills away from the others shows up in its own sums long before the
// line mean moves (one head of 12 off by 3σ moves the line mean by only 0.25σ).
// `allowance` (σ units, ≥ 0) is added to k for the uncertainty of the learnt head
// offset. Each head's ARL counts that head's packs, so with H heads the line sees a
// false alarm about every ARL packs (H heads × H packs per turn / H). Used by
// LineMonitor for head-related oscillation. Pure; O(1) per pack; not thread-safe.
#pragma once

#include <cstdint>
#include <optional>
#include <vector>

namespace heft {

struct HeadSignal {
  int head = 0;
  double shift = 0.0;      // estimated head offset from the learnt one, σ (eq. 16-32)
  std::int64_t onset = 0;  // index where the signalling sum last left zero
};

class HeadCusums {
 public:
  HeadCusums(int heads, double k, double h);

  std::optional<HeadSignal> Update(int head, double z, std::int64_t index, double allowance = 0.0);
  void Reset();
  int heads() const { return static_cast<int>(sides_.size()); }
  double upper(int head) const { return sides_[static_cast<std::size_t>(head)].up; }
  double lower(int head) const { return sides_[static_cast<std::size_t>(head)].down; }

  // Restart checkpoint (line_monitor_checkpoint.h): the running sums as plain values.
  struct Sums {
    double up = 0.0, down = 0.0;
    int up_run = 0, down_run = 0;
    std::int64_t up_onset = 0, down_onset = 0;
  };
  const std::vector<Sums>& SaveState() const { return sides_; }
  // False (nothing changed) when the head count differs.
  bool RestoreState(const std::vector<Sums>& sides) {
    if (sides.size() != sides_.size()) return false;
    sides_ = sides;
    return true;
  }

 private:
  double k_, h_;
  std::vector<Sums> sides_;
};

}  // namespace heft
