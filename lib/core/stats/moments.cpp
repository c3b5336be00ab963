#include "core/stats/moments.h"

#include <algorithm>
#include <cmath>

namespace heft {

std::optional<double> SampleSkewness(double n, double m2, double m3) {
  if (n < 3.0 || !(m2 > 0.0)) return std::nullopt;
  const double g1 = m3 / std::pow(m2, 1.5);
  return std::sqrt(n * (n - 1.0)) / (n - 2.0) * g1;
}

std::optional<double> SampleExcessKurtosis(double n, double m2, double m4) {
  if (n < 4.0 || !(m2 > 0.0)) return std::nullopt;
  // scipy: ((n² − 1) m4/m2² − 3 (n − 1)²) / ((n − 2)(n − 3)); equals ((n+1) g2 + 6)(n−1)/(...)
  return ((n * n - 1.0) * m4 / (m2 * m2) - 3.0 * (n - 1.0) * (n - 1.0)) / ((n - 2.0) * (n - 3.0));
}

void MomentAccumulator::Add(double x) {
  if (n_ == 0) {
    min_ = max_ = x;
    shift_ = x;
  } else {
    min_ = std::min(min_, x);
    max_ = std::max(max_, x);
  }
  const double n1 = static_cast<double>(n_);
  ++n_;
  const double n = static_cast<double>(n_);
  const double delta = (x - shift_) - mean_;
  const double delta_n = delta / n;
  const double delta_n2 = delta_n * delta_n;
  const double term1 = delta * delta_n * n1;
  mean_ += delta_n;
  m4_ += term1 * delta_n2 * (n * n - 3.0 * n + 3.0) + 6.0 * delta_n2 * m2_ - 4.0 * delta_n * m3_;
  m3_ += term1 * delta_n * (n - 2.0) - 3.0 * delta_n * m2_;
  m2_ += term1;
}

void MomentAccumulator::Merge(const MomentAccumulator& b) {
  if (b.n_ == 0) return;
  if (n_ == 0) {
    *this = b;
    return;
  }
  const double na = static_cast<double>(n_);
  const double nb = static_cast<double>(b.n_);
  const double n = na + nb;
  const double delta = (b.shift_ - shift_) + (b.mean_ - mean_);
  const double delta2 = delta * delta;
  const double delta3 = delta2 * delta;
  const double delta4 = delta2 * delta2;
  const double m2 = m2_ + b.m2_ + delta2 * na * nb / n;
  const double m3 = m3_ + b.m3_ + delta3 * na * nb * (na - nb) / (n * n) +
                    3.0 * delta * (na * b.m2_ - nb * m2_) / n;
  const double m4 = m4_ + b.m4_ + delta4 * na * nb * (na * na - na * nb + nb * nb) / (n * n * n) +
                    6.0 * delta2 * (na * na * b.m2_ + nb * nb * m2_) / (n * n) +
                    4.0 * delta * (na * b.m3_ - nb * m3_) / n;
  mean_ += delta * nb / n;
  m2_ = m2;
  m3_ = m3;
  m4_ = m4;
  n_ += b.n_;
  min_ = std::min(min_, b.min_);
  max_ = std::max(max_, b.max_);
}

double MomentAccumulator::Variance() const {
  return n_ < 2 ? 0.0 : std::max(0.0, m2_) / static_cast<double>(n_ - 1);
}

double MomentAccumulator::StdDev() const { return std::sqrt(Variance()); }

std::optional<double> MomentAccumulator::Skewness() const {
  const double n = static_cast<double>(n_);
  return n_ == 0 ? std::nullopt : SampleSkewness(n, m2_ / n, m3_ / n);
}

std::optional<double> MomentAccumulator::ExcessKurtosis() const {
  const double n = static_cast<double>(n_);
  return n_ == 0 ? std::nullopt : SampleExcessKurtosis(n, m2_ / n, m4_ / n);
}

}  // namespace heft
