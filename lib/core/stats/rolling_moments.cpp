#include "core/stats/rolling_moments.h"

#include <cmath>

#include "core/stats/control_constants.h"

namespace heft {

RollingMoments::RollingMoments(std::size_t capacity) : buffer_(capacity < 2 ? 2 : capacity) {}

void RollingMoments::Clear() {
  head_ = 0;
  count_ = 0;
  total_added_ = 0;
  sums_.Clear();
  sum_mr_ = 0.0;
  removals_since_recompute_ = 0;
}

void RollingMoments::Add(double x) {
  const std::size_t cap = buffer_.size();
  if (count_ == cap) {
    // Remove the oldest value and the moving range it shares with the next one.
    const double old = buffer_[head_];
    const double next = buffer_[head_ + 1 == cap ? 0 : head_ + 1];
    sums_.Remove(old);
    sum_mr_ -= std::fabs(next - old);
    --count_;
    ++removals_since_recompute_;
  }
  if (count_ > 0) sum_mr_ += std::fabs(x - Newest());
  buffer_[head_] = x;
  head_ = head_ + 1 == cap ? 0 : head_ + 1;
  ++count_;
  ++total_added_;
  sums_.Add(x);
  if (removals_since_recompute_ >= cap) Recompute();
}

void RollingMoments::Recompute() {
  removals_since_recompute_ = 0;
  // Re-centre on the current mean: d = x − reference then stays of the order of the spread.
  sums_.StartRebase(Mean());
  sum_mr_ = 0.0;
  const std::size_t cap = buffer_.size();
  std::size_t slot = head_ + cap - count_;
  if (slot >= cap) slot -= cap;
  double previous = 0.0;
  for (std::size_t i = 0; i < count_; ++i) {
    const double x = buffer_[slot];
    slot = slot + 1 == cap ? 0 : slot + 1;
    sums_.Add(x);
    if (i > 0) sum_mr_ += std::fabs(x - previous);
    previous = x;
  }
}

RollingMoments::State RollingMoments::SaveState() const {
  return {buffer_,           head_,  count_, total_added_, removals_since_recompute_,
          sums_.SaveState(), sum_mr_};
}

bool RollingMoments::RestoreState(const State& s) {
  if (s.buffer.size() != buffer_.size() || s.head >= buffer_.size() || s.count > buffer_.size()) {
    return false;
  }
  buffer_ = s.buffer;
  head_ = static_cast<std::size_t>(s.head);
  count_ = static_cast<std::size_t>(s.count);
  total_added_ = s.total_added;
  removals_since_recompute_ = static_cast<std::size_t>(s.removals_since_recompute);
  sums_.RestoreState(s.sums);
  sum_mr_ = s.sum_mr;
  return true;
}

double RollingMoments::Mean() const { return sums_.Mean(count_); }

double RollingMoments::Variance() const { return sums_.Variance(count_); }

double RollingMoments::StdDev() const { return std::sqrt(Variance()); }

std::optional<double> RollingMoments::Skewness() const { return sums_.Skewness(count_); }

std::optional<double> RollingMoments::ExcessKurtosis() const {
  return sums_.ExcessKurtosis(count_);
}

double RollingMoments::MeanMovingRange() const {
  return count_ < 2 ? 0.0 : (sum_mr_ > 0.0 ? sum_mr_ : 0.0) / static_cast<double>(count_ - 1);
}

double RollingMoments::MovingRangeSigma() const { return MeanMovingRange() / kD2Span2; }

double RollingMoments::At(std::size_t i) const {
  // A compare, not a division: head_ + cap − count_ + i < 2·cap always.
  const std::size_t cap = buffer_.size();
  const std::size_t slot = head_ + cap - count_ + i;
  return buffer_[slot >= cap ? slot - cap : slot];
}

double RollingMoments::Oldest() const { return At(0); }

double RollingMoments::Newest() const {
  return buffer_[head_ == 0 ? buffer_.size() - 1 : head_ - 1];
}

void RollingMoments::CopyInOrder(std::vector<double>* out) const {
  out->clear();
  out->reserve(count_);
  for (std::size_t i = 0; i < count_; ++i) out->push_back(At(i));
}

}  // namespace heft
