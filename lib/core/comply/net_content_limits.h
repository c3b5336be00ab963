// net_content_limits.h — the tolerance (TNE or MAV) and the T1/T2 limits for
// one nominal quantity, computed from a RuleTable with exact decimal rounding.
//
// Used by `heft limits`, the lot accumulator, live risk and the safe-target
// advice. Pure functions; thread-safe.
#pragma once

#include <cstdint>
#include <optional>

#include "core/comply/rule_table.h"
#include "core/model/status.h"

namespace heft::comply {

struct NetContentLimits {
  // Exact values in fixed point (tenths of a milligram; see kUnitsPerGram).
  std::int64_t nominal_units = 0;
  std::int64_t tolerance_units = 0;      // after rounding
  std::int64_t t1_units = 0;             // nominal − tolerance
  std::optional<std::int64_t> t2_units;  // nominal − multiple × tolerance, if the table has T2
  // Unrounded tolerance as an exact fraction raw_numerator / raw_denominator units.
  std::int64_t raw_numerator = 0;
  std::int64_t raw_denominator = 1;

  // The same in grams, for arithmetic with weights.
  double nominal_g = 0.0;
  double tolerance_g = 0.0;
  double raw_tolerance_g = 0.0;
  double t1_g = 0.0;
  std::optional<double> t2_g;

  const ToleranceBand* band = nullptr;  // points into the RuleTable used
  bool rounded = false;                 // true if the rounding changed the value
};

// Grams → fixed-point units, rounded to the nearest tenth of a milligram.
// Fails for values that are not finite, not positive or above 10^9 g.
Status GramsToUnits(double grams, std::int64_t* units);
inline double UnitsToGrams(std::int64_t units) {
  return static_cast<double>(units) / static_cast<double>(kUnitsPerGram);
}

// The limits for `nominal_g` under `table`. Fails (with the reason) when the
// nominal is outside the table, or falls in an unconfirmed band and
// `allow_unconfirmed` is false.
Status ComputeLimits(const RuleTable& table, double nominal_g, bool allow_unconfirmed,
                     NetContentLimits* out);

}  // namespace heft::comply
