#include "core/design/linear_solve.h"

#include <cmath>
#include <utility>

namespace heft {

bool SolveLinearSystem(std::vector<double>& a, std::vector<double>& b) {
  LuSolver lu;
  if (!lu.Factor(std::move(a), b.size())) return false;
  lu.Solve(b);
  a.clear();
  return true;
}

bool LuSolver::Factor(std::vector<double> a, std::size_t n) {
  n_ = n;
  lu_ = std::move(a);
  pivot_.assign(n, 0);
  if (lu_.size() != n * n) return false;
  double* m = lu_.data();
  for (std::size_t col = 0; col < n; ++col) {
    std::size_t pivot = col;
    double best = std::fabs(m[col * n + col]);
    for (std::size_t row = col + 1; row < n; ++row) {
      const double v = std::fabs(m[row * n + col]);
      if (v > best) best = v, pivot = row;
    }
    if (!(best > 0.0) || !std::isfinite(best)) return false;
    pivot_[col] = pivot;
    if (pivot != col) {
      for (std::size_t j = 0; j < n; ++j) std::swap(m[col * n + j], m[pivot * n + j]);
    }
    const double inv = 1.0 / m[col * n + col];
    const double* pivot_row = m + col * n;
    for (std::size_t row = col + 1; row < n; ++row) {
      double* r = m + row * n;
      const double factor = r[col] * inv;
      r[col] = factor;  // the multiplier is kept in L's place
      if (factor == 0.0) continue;
      for (std::size_t j = col + 1; j < n; ++j) r[j] -= factor * pivot_row[j];
    }
  }
  return true;
}

void LuSolver::Solve(std::vector<double>& b) const {
  const std::size_t n = n_;
  const double* m = lu_.data();
  // Rows were swapped whole (multipliers included), so apply every swap to b
  // first, then the unit lower triangle, then the upper.
  for (std::size_t col = 0; col < n; ++col) {
    if (pivot_[col] != col) std::swap(b[col], b[pivot_[col]]);
  }
  for (std::size_t col = 0; col < n; ++col) {
    const double v = b[col];
    if (v == 0.0) continue;
    for (std::size_t row = col + 1; row < n; ++row) b[row] -= m[row * n + col] * v;
  }
  for (std::size_t i = n; i-- > 0;) {
    double sum = b[i];
    const double* r = m + i * n;
    for (std::size_t j = i + 1; j < n; ++j) sum -= r[j] * b[j];
    b[i] = sum / r[i];
  }
}

}  // namespace heft
