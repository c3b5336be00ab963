// periodicity_test.h — is there a cycle in the last N values, and how long is it?
//
// Periodogram Iₖ = |Σ xₜ e^{−2πikt/N}|² / N of a window of N (a power of two)
// values, by an in-place radix-2² FFT on buffers allocated once. Significance by
// Fisher's g test (Fisher 1929): g = max Iₖ / Σ Iₖ over the m = N/2 − 1 interior
// Fourier frequencies, P(g > x) ≈ m(1 − x)^{m−1} under white noise (first term of the
// exact series; accurate in the small-p tail we use). The Nyquist ordinate (period 2,
// alternating packs) is χ²₁ rather than χ²₂ and is tested on its own,
// P ≈ P(χ²₁ > I_{N/2}/Ī); the reported p is the Bonferroni 2·min of the two.
// The period is refined by a parabola through the log ordinates around the peak.
// A least-squares line is removed first and the lowest `skip_bins` frequencies are
// left out of the search (steps and drifts put their power there; they are other
// detectors' business; a peak at the lowest searched frequency is taken for their tail
// and not reported). The caller whitens the series (autocorrelated noise is not white).
// Used by LineMonitor every few hundred packs. Pure; not thread-safe.
#pragma once

#include <complex>
#include <cstddef>
#include <span>
#include <vector>

namespace heft {

struct PeriodicityResult {
  double period = 0.0;  // in samples (refined)
  std::size_t bin = 0;  // peak Fourier index k (period ≈ N/k)
  double g = 0.0;       // Fisher's g of the peak (Nyquist: its share of the total)
  double p_value = 1.0;
  double amplitude = 0.0;  // sinusoid amplitude at the peak (units of x), leakage included
};

class PeriodicityTest {
 public:
  // `window` is rounded up to a power of two (≥ 16).
  explicit PeriodicityTest(std::size_t window, std::size_t skip_bins = 3);

  std::size_t window() const { return n_; }
  // `values` must hold window() values, oldest first.
  PeriodicityResult Evaluate(std::span<const double> values);
  // Periodogram ordinates of the last Evaluate (k = 0..N/2), for tests.
  const std::vector<double>& ordinates() const { return power_; }

 private:
  std::size_t n_;
  std::size_t skip_;
  std::vector<std::complex<double>> data_;
  std::vector<std::complex<double>> twiddle_;
  std::vector<std::complex<double>> pass_twiddle_;  // per radix-2² pass: W^j, W^2j, W^3j
  std::size_t first_len_ = 4;                       // length of the first fused pass
  std::vector<std::size_t> reversed_;
  std::vector<double> power_;
};

}  // namespace heft
