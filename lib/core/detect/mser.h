// mser.h — MSER and MSER-5 truncation of a start-up transient.
//
// MSER(d) = Σ_{i>d} (Yᵢ − Ȳ(d))² / (n − d)², minimised over d ≤ n/2; ties go to
// the smallest d (White 1997, Simulation 69(6); MSER-5 applies it to batch means
// of 5 — White, Cobb & Spratt, WSC 2000). Check values: check-values.md §5.1.
// Pure functions.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

namespace heft {

struct MserResult {
  std::size_t truncate = 0;     // points to drop (for MSER-5: raw observations = 5·d*)
  double statistic = 0.0;       // MSER at the optimum
  bool at_search_limit = false; // optimum at the end of the search range: maybe not settled
};

MserResult Mser(std::span<const double> series);

// MSER on non-overlapping batch means of `batch` values (5 for MSER-5); the
// result's `truncate` is in raw observations. A trailing partial batch is ignored.
MserResult MserBatched(std::span<const double> series, std::size_t batch = 5);

// MSER(d) for d = 0..n/2 (for tests and diagnostics).
std::vector<double> MserCurve(std::span<const double> series);

}  // namespace heft
