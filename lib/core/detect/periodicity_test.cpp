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
  // Butterfly passes: two radix-2 stages fused into one (radix-2², same bit-reversed
  // input order), so each pass reads and writes the data once for two stages and
  // needs three twiddle products per four points instead of four. With an odd
  // number of stages a plain radix-2 pass of length 2 goes first. Each fused pass of
  // length L keeps W^j, W^{2j}, W^{3j} (W = e^{−2πi/L}, j < L/4) side by side.
  std::size_t stages = 0;
  while ((std::size_t{1} << stages) < half) ++stages;
  first_len_ = stages % 2 == 1 ? 8 : 4;
  pass_twiddle_.clear();
  for (std::size_t len = first_len_; len <= half; len *= 4) {
    for (std::size_t j = 0; j < len / 4; ++j) {
      for (std::size_t power = 1; power <= 3; ++power) {
        const double a =
            -2.0 * std::numbers::pi * static_cast<double>(power * j) / static_cast<double>(len);
        pass_twiddle_.push_back({std::cos(a), std::sin(a)});
      }
    }
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
  // Iterative Cooley–Tukey of size N/2 in radix-2² passes (see the constructor);
  // complex products written out (std::complex's operator* checks for NaN/∞ and is
  // several times slower).
  std::complex<double>* d = data_.data();
  const std::complex<double>* w = twiddle_.data();
  if (first_len_ == 8) {  // odd stage count: one radix-2 pass, twiddle 1
    for (std::size_t start = 0; start < half; start += 2) {
      const std::complex<double> u = d[start], t = d[start + 1];
      d[start] = {u.real() + t.real(), u.imag() + t.imag()};
      d[start + 1] = {u.real() - t.real(), u.imag() - t.imag()};
    }
  }
  const std::complex<double>* pw = pass_twiddle_.data();
  for (std::size_t len = first_len_; len <= half; len *= 4) {
    const std::size_t quarter = len / 4;
    for (std::size_t start = 0; start < half; start += len) {
      std::complex<double>* p0 = d + start;
      std::complex<double>* p1 = p0 + quarter;
      std::complex<double>* p2 = p1 + quarter;
      std::complex<double>* p3 = p2 + quarter;
      for (std::size_t j = 0; j < quarter; ++j) {
        const std::complex<double>* tw = pw + 3 * j;
        const double w1r = tw[0].real(), w1i = tw[0].imag();
        const double w2r = tw[1].real(), w2i = tw[1].imag();
        const double w3r = tw[2].real(), w3i = tw[2].imag();
        const double ar = p0[j].real(), ai = p0[j].imag();
        const double br = p1[j].real(), bi = p1[j].imag();
        const double cr = p2[j].real(), ci = p2[j].imag();
        const double er = p3[j].real(), ei = p3[j].imag();
        // Stage L/2 pairs (a, b) and (c, e) with W^{2j}; stage L pairs the results with
        // W^j and W^{j+L/4} = −i·W^j, which W^j·c ± W^{3j}·e gives with three products.
        const double tbr = w2r * br - w2i * bi, tbi = w2r * bi + w2i * br;
        const double xr = w1r * cr - w1i * ci, xi = w1r * ci + w1i * cr;
        const double yr = w3r * er - w3i * ei, yi = w3r * ei + w3i * er;
        const double a1r = ar + tbr, a1i = ai + tbi;
        const double b1r = ar - tbr, b1i = ai - tbi;
        const double pr = xr + yr, pi = xi + yi;
        const double qr = xr - yr, qi = xi - yi;
        p0[j] = {a1r + pr, a1i + pi};
        p2[j] = {a1r - pr, a1i - pi};
        // −i·q = (qi, −qr)
        p1[j] = {b1r + qi, b1i - qr};
        p3[j] = {b1r - qi, b1i + qr};
      }
    }
    pw += 3 * quarter;
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
