#include "core/design/standard_normal.h"

#include <cmath>
#include <numbers>

namespace heft {

double NormalPdf(double x) {
  return std::exp(-0.5 * x * x) * (std::numbers::inv_sqrtpi / std::numbers::sqrt2);
}

double NormalCdf(double x) { return 0.5 * std::erfc(-x / std::numbers::sqrt2); }

double NormalUpperTail(double x) { return 0.5 * std::erfc(x / std::numbers::sqrt2); }

}  // namespace heft
