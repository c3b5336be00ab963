// linear_solve.h — dense linear systems for the ARL computations.
//
// Gaussian elimination (LU) with partial pivoting on a row-major n×n matrix;
// the ARL systems (I − Q)·L = 1 are small (tens to a few hundred unknowns) and
// well conditioned unless the in-control ARL is astronomically large.
// LuSolver keeps the factors for several right-hand sides (inverse iteration
// for the steady-state laws). Pure; thread-safe (works on the caller's data).
#pragma once

#include <cstddef>
#include <vector>

namespace heft {

// Solves A·x = b. `a` (n·n, row-major) and `b` (n) are overwritten; on return
// `b` holds x. Returns false when a pivot is zero or not finite (singular).
bool SolveLinearSystem(std::vector<double>& a, std::vector<double>& b);

class LuSolver {
 public:
  // Factors A (n·n row-major, taken by value); false when singular.
  bool Factor(std::vector<double> a, std::size_t n);
  // Overwrites b (n) with A⁻¹·b. Only after a successful Factor.
  void Solve(std::vector<double>& b) const;

 private:
  std::size_t n_ = 0;
  std::vector<double> lu_;
  std::vector<std::size_t> pivot_;
};

}  // namespace heft
