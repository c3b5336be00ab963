// cumulative_stats.h — moments since the last reset (a lot, a shift, the start of
// monitoring): count, mean, sd, min, max, shape and moving-range sigma over an unbounded run.
//
// Welford-style (MomentAccumulator), so millions of packs at 1e6 g lose no precision.
// No quantiles: they would need every value kept; use a window for those. Time is passed
// in. Not thread-safe; one owner (a LineMonitor, per line and per head).
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string_view>

#include "core/stats/moments.h"

namespace heft {

enum class ResetReason : std::uint8_t { kStart, kLot, kShift };
std::string_view ResetReasonName(ResetReason reason);  // "start", "lot", "shift"

class CumulativeStats {
 public:
  bool Add(double x);  // false (ignored) for non-finite x
  void Reset(ResetReason reason, std::int64_t time_ms);

  ResetReason reset_reason() const { return reason_; }
  std::int64_t since_ms() const { return since_ms_; }
  const MomentAccumulator& moments() const { return moments_; }
  std::size_t count() const { return moments_.count(); }
  double Mean() const { return moments_.Mean(); }
  double StdDev() const { return moments_.StdDev(); }
  double MeanMovingRange() const;
  double MovingRangeSigma() const;  // MR̄ / d2(2)

 private:
  MomentAccumulator moments_;
  double last_ = 0.0;
  double sum_mr_ = 0.0;
  ResetReason reason_ = ResetReason::kStart;
  std::int64_t since_ms_ = 0;
};

}  // namespace heft
