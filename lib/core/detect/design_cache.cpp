#include "core/detect/design_cache.h"

#include "core/detect/ewma_chart.h"

namespace heft {

double DesignCache::EwmaLimit(double lambda, double arl0) {
  const auto key = std::make_pair(lambda, arl0);
  auto it = ewma_limits_.find(key);
  if (it == ewma_limits_.end()) {
    it = ewma_limits_.emplace(key, EwmaChart::LimitForArl(lambda, arl0)).first;
  }
  return it->second;
}

const ShiftCusumDesign& DesignCache::ShiftCusum(double false_alarms_per_day,
                                                double packs_per_minute, double min_shift_sigma) {
  const auto key = std::make_tuple(false_alarms_per_day, packs_per_minute, min_shift_sigma);
  auto it = shift_cusums_.find(key);
  if (it == shift_cusums_.end()) {
    it =
        shift_cusums_
            .emplace(key, DesignShiftCusum(false_alarms_per_day, packs_per_minute, min_shift_sigma))
            .first;
  }
  return it->second;
}

}  // namespace heft
