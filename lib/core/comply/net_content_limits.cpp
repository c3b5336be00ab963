// net_content_limits.cpp — tolerance lookup and exact round-up.
#include "core/comply/net_content_limits.h"

#include <cmath>
#include <cstdio>
#include <string>

namespace heft::comply {

namespace {

constexpr double kMaxGrams = 1e9;  // keeps every product below in int64 range

std::string GramsText(double grams) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.10g", grams);
  return buf;
}

// ceil(a / b) for a ≥ 0, b > 0.
std::int64_t CeilDiv(std::int64_t a, std::int64_t b) { return (a + b - 1) / b; }

}  // namespace

Status GramsToUnits(double grams, std::int64_t* units) {
  if (!std::isfinite(grams)) return Status::Error("nominal quantity is not a finite number");
  if (grams <= 0.0) {
    return Status::Error("nominal quantity " + GramsText(grams) + " g is not positive");
  }
  if (grams > kMaxGrams) {
    return Status::Error("nominal quantity " + GramsText(grams) + " g is implausibly large");
  }
  *units = std::llround(grams * static_cast<double>(kUnitsPerGram));
  return Status::Ok();
}

Status ComputeLimits(const RuleTable& table, double nominal_g, bool allow_unconfirmed,
                     NetContentLimits* out) {
  std::int64_t nominal_units = 0;
  if (Status s = GramsToUnits(nominal_g, &nominal_units); !s.ok()) return s;
  bool skipped = false;
  const ToleranceBand* band = FindBand(table, nominal_units, allow_unconfirmed, &skipped);
  if (band == nullptr) {
    if (skipped) {
      return Status::Error("nominal quantity " + GramsText(nominal_g) + " g falls in a " +
                           table.tolerance_name + " band of " + table.id +
                           " marked unconfirmed; opt in to use it");
    }
    std::string range;
    if (!table.bands.empty()) {
      range = " (table covers " + GramsText(UnitsToGrams(table.bands.front().from_units)) + " g";
      if (table.bands.back().to_units) {
        range += " to " + GramsText(UnitsToGrams(*table.bands.back().to_units)) + " g)";
      } else {
        range += " and above)";
      }
    }
    return Status::Error("nominal quantity " + GramsText(nominal_g) + " g is outside the " +
                         table.tolerance_name + " table of " + table.id + range);
  }

  NetContentLimits limits;
  limits.nominal_units = nominal_units;
  limits.band = band;
  if (band->percent) {
    // tolerance = nominal × value / (100 × kPercentScale), exactly, in units.
    limits.raw_numerator = nominal_units * band->value;
    limits.raw_denominator = 100 * kPercentScale;
    if (table.percent_round_up_units > 0) {
      const std::int64_t step = table.percent_round_up_units;
      limits.tolerance_units = CeilDiv(limits.raw_numerator, limits.raw_denominator * step) * step;
    } else {
      // No rounding rule: keep the nearest tenth of a milligram.
      limits.tolerance_units =
          (limits.raw_numerator + limits.raw_denominator / 2) / limits.raw_denominator;
    }
  } else {
    limits.raw_numerator = band->value;
    limits.raw_denominator = 1;
    limits.tolerance_units = band->value;
  }
  limits.rounded = limits.tolerance_units * limits.raw_denominator != limits.raw_numerator;
  limits.t1_units = nominal_units - limits.tolerance_units;
  if (table.t2_multiple) {
    limits.t2_units = nominal_units - *table.t2_multiple * limits.tolerance_units;
  }

  limits.nominal_g = UnitsToGrams(limits.nominal_units);
  limits.tolerance_g = UnitsToGrams(limits.tolerance_units);
  limits.raw_tolerance_g = static_cast<double>(limits.raw_numerator) /
                           static_cast<double>(limits.raw_denominator) /
                           static_cast<double>(kUnitsPerGram);
  limits.t1_g = UnitsToGrams(limits.t1_units);
  if (limits.t2_units) limits.t2_g = UnitsToGrams(*limits.t2_units);
  *out = limits;
  return Status::Ok();
}

}  // namespace heft::comply
