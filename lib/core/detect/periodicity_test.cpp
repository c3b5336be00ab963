#include "core/detect/periodicity_test.h"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace heft {

PeriodicityTest::PeriodicityTest(std::size_t window, std::size_t skip_bins) {
  n_ = 16;
  while (n_ < window) n_ *= 2;
  // The N real values are transformed as N/2 complex ones (even samples real, odd
  // imaginary) and the spectrum untangled afterwards: half the work of a complex FFT.
  const std::size_t half = n_ / 2;
  data_.resize(half);
  power_.resize(half + 1);
  twiddle_.resize(half);
  for (std::size_t k = 0; k < half; ++k) {
    const double a = -2.0 * std::numbers::pi * static_cast<double>(k) / static_cast<double>(n_);
    twiddle_[k] = {std::cos(a), std::sin(a)};
  }
  // Each butterfly stage's twiddles side by side (stage of length len at offset
  // len/2 − 1), copied from the table above so the values are the very same: the
  // inner loop then reads them in order instead of with a stride.
  stage_twiddle_.clear();
  for (std::size_t len = 2; len <= half; len *= 2) {
    const std::size_t step = 2 * (half / len);
    for (std::size_t j = 0; j < len / 2; ++j) stage_twiddle_.push_back(twiddle_[j * step]);
  }
  skip_ = std::min(skip_bins, n_ / 4);
  reversed_.resize(half);
  std::size_t bits = 0;
  while ((std::size_t{1} << bits) < half) ++bits;
  for (std::size_t i = 0; i < half; ++i) {
    std::size_t r = 0;
    for (std::size_t b = 0; b < bits; ++b) r |= ((i >> b) & 1u) << (bits - 1 - b);
    reversed_[i] = r;
  }
}

PeriodicityResult PeriodicityTest::Evaluate(std::span<const double> values) {
  PeriodicityResult r;
  if (values.size() != n_) return r;
  // Remove the least-squares line a + b·(t − t̄).
  const double dn = static_cast<double>(n_);
  const double t_mean = 0.5 * (dn - 1.0);
  double mean = 0.0, sty = 0.0;
  for (std::size_t i = 0; i < n_; ++i) {
    mean += values[i];
    sty += (static_cast<double>(i) - t_mean) * values[i];
  }
  mean /= dn;
  const double stt = dn * (dn * dn - 1.0) / 12.0;
  const double slope = sty / stt;
  const std::size_t half = n_ / 2;
  for (std::size_t i = 0; i < half; ++i) {
    const double even = static_cast<double>(2 * i), odd = even + 1.0;
    data_[reversed_[i]] = {values[2 * i] - mean - slope * (even - t_mean),
                           values[2 * i + 1] - mean - slope * (odd - t_mean)};
  }
  // Iterative Cooley–Tukey of size N/2 (its twiddles are every other one of size N);
  // complex products written out (std::complex's operator* checks for NaN/∞ and is
  // several times slower).
  std::complex<double>* d = data_.data();
  const std::complex<double>* w = twiddle_.data();
  // First stage: the twiddle is 1.
  for (std::size_t start = 0; start < half; start += 2) {
    const std::complex<double> u = d[start], t = d[start + 1];
    d[start] = {u.real() + t.real(), u.imag() + t.imag()};
    d[start + 1] = {u.real() - t.real(), u.imag() - t.imag()};
  }
  for (std::size_t len = 4; len <= half; len *= 2) {
    const std::size_t half_len = len / 2;
    const std::complex<double>* sw = stage_twiddle_.data() + (half_len - 1);
    for (std::size_t start = 0; start < half; start += len) {
      for (std::size_t j = 0; j < half_len; ++j) {
        const double wr = sw[j].real(), wi = sw[j].imag();
        const double xr = d[start + j + half_len].real(), xi = d[start + j + half_len].imag();
        const double tr = wr * xr - wi * xi, ti = wr * xi + wi * xr;
        const double ur = d[start + j].real(), ui = d[start + j].imag();
        d[start + j + half_len] = {ur - tr, ui - ti};
        d[start + j] = {ur + tr, ui + ti};
      }
    }
  }
  // Untangle: with Z the half-size transform, E = (Z[k] + conj Z[N/2−k]) / 2 and
  // O = (Z[k] − conj Z[N/2−k]) / 2i are the even and odd samples' transforms, and
  // X[k] = E + W^k·O; X[0] and X[N/2] are the sum and difference of Z[0]'s parts.
  const double inv_n = 1.0 / static_cast<double>(n_);
  const double x0 = d[0].real() + d[0].imag(), xn = d[0].real() - d[0].imag();
  power_[0] = x0 * x0 * inv_n;
  power_[half] = xn * xn * inv_n;
  for (std::size_t k = 1; k < half; ++k) {
    const double ar = d[k].real(), ai = d[k].imag();
    const double br = d[half - k].real(), bi = -d[half - k].imag();  // conj Z[N/2−k]
    const double er = 0.5 * (ar + br), ei = 0.5 * (ai + bi);
    // (a − b) / 2i = (Im(a − b) − i·Re(a − b)) / 2
    const double orr = 0.5 * (ai - bi), oi = -0.5 * (ar - br);
    const double wr = w[k].real(), wi = w[k].imag();
    const double xr = er + wr * orr - wi * oi, xi = ei + wr * oi + wi * orr;
    power_[k] = (xr * xr + xi * xi) * inv_n;
  }
  const std::size_t m = n_ / 2 - 1 - skip_;  // interior frequencies searched
  double total = 0.0, best = -1.0;
  std::size_t best_k = skip_ + 1;
  for (std::size_t k = skip_ + 1; k < half; ++k) {
    total += power_[k];
    if (power_[k] > best) {
      best = power_[k];
      best_k = k;
    }
  }
  if (!(total > 0.0)) return r;
  const double g = best / total;
  const double p_interior =
      std::min(1.0, static_cast<double>(m) * std::pow(1.0 - g, static_cast<double>(m) - 1.0));
  const double mean_ordinate = total / static_cast<double>(m);
  const double nyquist_ratio = power_[n_ / 2] / mean_ordinate;
  const double p_nyquist = std::erfc(std::sqrt(std::max(0.0, nyquist_ratio) / 2.0));
  if (p_nyquist < p_interior) {
    r.bin = n_ / 2;
    r.period = 2.0;
    r.g = power_[n_ / 2] / (total + power_[n_ / 2]);
    r.p_value = std::min(1.0, 2.0 * p_nyquist);
    // A cosine of amplitude a at Nyquist gives I = N·a².
    r.amplitude = std::sqrt(power_[n_ / 2] / static_cast<double>(n_));
    return r;
  }
  r.bin = best_k;
  r.g = g;
  r.p_value = std::min(1.0, 2.0 * p_interior);
  // A peak at the lowest searched frequency is the tail of a step or trend, not a cycle.
  if (best_k == skip_ + 1 && power_[best_k] > power_[best_k + 1]) r.p_value = 1.0;
  double delta = 0.0;
  if (best_k > skip_ + 1 && best_k + 1 < n_ / 2) {
    const double a = std::log(power_[best_k - 1] + 1e-300);
    const double b = std::log(power_[best_k] + 1e-300);
    const double c = std::log(power_[best_k + 1] + 1e-300);
    const double den = a - 2.0 * b + c;
    if (den < 0.0) delta = std::clamp(0.5 * (a - c) / den, -0.5, 0.5);
  }
  r.period = static_cast<double>(n_) / (static_cast<double>(best_k) + delta);
  // A sinusoid of amplitude a puts N·a²/4 into its bin and neighbours together.
  double peak = power_[best_k];
  if (best_k > skip_ + 1) peak += power_[best_k - 1];
  if (best_k + 1 < n_ / 2) peak += power_[best_k + 1];
  peak -= 2.0 * mean_ordinate;  // the neighbours' share of the noise
  r.amplitude = 2.0 * std::sqrt(std::max(0.0, peak) / static_cast<double>(n_));
  return r;
}

}  // namespace heft
