// standard_normal.h — the standard normal density, distribution and tail.
//
// Φ via std::erfc so that both tails keep full relative precision (the ARL
// kernels need Φ(−9) and 1 − Φ(9) alike). Used by the ARL computations in
// core/design. Pure functions; thread-safe.
#pragma once

namespace heft {

// φ(x) = exp(−x²/2)/√(2π).
double NormalPdf(double x);

// Φ(x) = ½·erfc(−x/√2).
double NormalCdf(double x);

// 1 − Φ(x) = ½·erfc(x/√2), without the cancellation of 1 − NormalCdf(x).
double NormalUpperTail(double x);

}  // namespace heft
