#include "core/stats/time_window_stats.h"

#include <algorithm>
#include <cmath>

#include "core/stats/control_constants.h"
#include "core/stats/window_summary.h"

namespace heft {

TimeWindowStats::TimeWindowStats(std::int64_t span_ms)
    : span_ms_(std::max<std::int64_t>(1, span_ms)) {}

void TimeWindowStats::Clear() {
  has_time_ = false;
  now_ms_ = 0;
  samples_.clear();
  sums_.Clear();
  sum_mr_ = 0.0;
  removals_since_rebuild_ = 0;
  order_.Clear();
}

bool TimeWindowStats::Add(std::int64_t time_ms, double x) {
  if (!std::isfinite(x)) return false;
  AdvanceTo(time_ms);
  if (!samples_.empty()) sum_mr_ += std::fabs(x - samples_.back().value);
  samples_.push_back(Sample{now_ms_, x});
  order_.Insert(x);
  sums_.Add(x);
  return true;
}

void TimeWindowStats::AdvanceTo(std::int64_t now_ms) {
  if (!has_time_ || now_ms > now_ms_) now_ms_ = now_ms;
  has_time_ = true;
  Evict();
}

void TimeWindowStats::Evict() {
  const std::int64_t oldest_kept = now_ms_ - span_ms_;  // keep time > now − span
  bool removed = false;
  while (!samples_.empty() && samples_.front().time_ms <= oldest_kept) {
    const Sample old = samples_.front();
    samples_.pop_front();
    if (!samples_.empty()) sum_mr_ -= std::fabs(samples_.front().value - old.value);
    sums_.Remove(old.value);
    order_.Erase(old.value);
    ++removals_since_rebuild_;
    removed = true;
  }
  if (samples_.empty()) {
    sums_.Clear();
    sum_mr_ = 0.0;
    removals_since_rebuild_ = 0;
  } else if (removed && removals_since_rebuild_ >= samples_.size() + 16) {
    Rebuild();
  }
}

void TimeWindowStats::Rebuild() {
  removals_since_rebuild_ = 0;
  sums_.StartRebase(Mean());
  sum_mr_ = 0.0;
  for (std::size_t i = 0; i < samples_.size(); ++i) {
    sums_.Add(samples_[i].value);
    if (i > 0) sum_mr_ += std::fabs(samples_[i].value - samples_[i - 1].value);
  }
}

double TimeWindowStats::StdDev() const { return std::sqrt(Variance()); }

double TimeWindowStats::MovingRangeSigma() const {
  const std::size_t n = count();
  return n < 2 ? 0.0 : std::max(0.0, sum_mr_) / static_cast<double>(n - 1) / kD2Span2;
}

WindowSummary TimeWindowStats::Summary(QuantileType type) const {
  WindowSummary s;
  s.quantile_type = type;
  s.count = count();
  if (s.count == 0) return s;
  s.mean = Mean();
  s.sd = StdDev();
  s.mr_sigma = MovingRangeSigma();
  s.skewness = sums_.Skewness(s.count);
  s.kurtosis = sums_.ExcessKurtosis(s.count);
  FillOrderFields(order_, type, &s);
  return s;
}

void TimeWindowStats::Values(std::vector<double>* out) const {
  out->clear();
  out->reserve(samples_.size());
  for (const Sample& s : samples_) out->push_back(s.value);
}

}  // namespace heft
