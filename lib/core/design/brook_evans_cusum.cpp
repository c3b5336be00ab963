#include "core/design/brook_evans_cusum.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

#include "core/design/linear_solve.h"
#include "core/design/standard_normal.h"

namespace heft {

double BrookEvansCusumArl(double k, double h, double delta, int states) {
  const int m = std::max(2, states);
  if (!(h > 0.0) || !std::isfinite(h)) return std::numeric_limits<double>::infinity();
  const double w = 2.0 * h / (2.0 * m - 1.0);
  const std::size_t size = static_cast<std::size_t>(m);
  std::vector<double> a(size * size, 0.0);
  std::vector<double> b(size, 1.0);
  for (int i = 0; i < m; ++i) {
    double* row = a.data() + static_cast<std::size_t>(i) * size;
    const double shift = i * w - k + delta;  // the next sum is i·w + (x − δ) + δ − k
    // Upper cell edges (j + ½)w for j = 0..m−1; the cell of j is between edges j−1 and j.
    double below = 0.0;  // P(next sum < lower edge of cell j); cell 0 starts at −∞
    for (int j = 0; j < m; ++j) {
      const double upper = NormalCdf((j + 0.5) * w - shift);
      row[j] -= upper - below;
      below = upper;
    }
    row[i] += 1.0;
  }
  if (!SolveLinearSystem(a, b)) return std::numeric_limits<double>::infinity();
  return b[0];
}

double BrookEvansCusumArlExtrapolated(double k, double h, double delta, int states) {
  const double coarse = BrookEvansCusumArl(k, h, delta, states);
  const double fine = BrookEvansCusumArl(k, h, delta, 2 * states);
  return (4.0 * fine - coarse) / 3.0;
}

}  // namespace heft
