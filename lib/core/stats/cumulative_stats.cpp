#include "core/stats/cumulative_stats.h"

#include <cmath>

#include "core/stats/control_constants.h"

namespace heft {

std::string_view ResetReasonName(ResetReason reason) {
  switch (reason) {
    case ResetReason::kStart:
      return "start";
    case ResetReason::kLot:
      return "lot";
    case ResetReason::kShift:
      return "shift";
  }
  return "start";
}

bool CumulativeStats::Add(double x) {
  if (!std::isfinite(x)) return false;
  if (moments_.count() > 0) sum_mr_ += std::fabs(x - last_);
  last_ = x;
  moments_.Add(x);
  return true;
}

void CumulativeStats::Reset(ResetReason reason, std::int64_t time_ms) {
  moments_.Clear();
  last_ = 0.0;
  sum_mr_ = 0.0;
  reason_ = reason;
  since_ms_ = time_ms;
}

double CumulativeStats::MeanMovingRange() const {
  const std::size_t n = moments_.count();
  return n < 2 ? 0.0 : sum_mr_ / static_cast<double>(n - 1);
}

double CumulativeStats::MovingRangeSigma() const { return MeanMovingRange() / kD2Span2; }

}  // namespace heft
