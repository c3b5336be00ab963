// design_cache.h — detector designs computed once per distinct target.
//
// An exact design (ARL integral equations, a Brook–Evans chain) takes milliseconds;
// a plant of many lines with the same settings needs it once, not once per line and
// start. Keyed by the exact inputs, so a cached value is the very one the design
// function would return. Pure; not thread-safe:
// owned by one Plant and handed to its LineMonitors.
#pragma once

#include <map>
#include <tuple>
#include <utility>

#include "core/detect/detector_design.h"

namespace heft {

class DesignCache {
 public:
  // EwmaChart::LimitForArl(lambda, arl0), memoised: a Brook–Evans solve per line
  // start was the largest start-up cost left once designs were shared.
  double EwmaLimit(double lambda, double arl0);
  // DesignShiftCusum(false_alarms_per_day, packs_per_minute, min_shift_sigma), memoised.
  const ShiftCusumDesign& ShiftCusum(double false_alarms_per_day, double packs_per_minute,
                                     double min_shift_sigma);
  // Distinct shift-CUSUM designs held.
  std::size_t size() const { return shift_cusums_.size(); }

 private:
  std::map<std::pair<double, double>, double> ewma_limits_;
  std::map<std::tuple<double, double, double>, ShiftCusumDesign> shift_cusums_;
};

}  // namespace heft
