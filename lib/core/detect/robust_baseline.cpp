#include "core/detect/robust_baseline.h"

#include <algorithm>
#include <cmath>

namespace heft {

void RobustBaseline::Learn(std::span<const double> grams, std::span<const int> heads, int n_heads) {
  n_heads_ = std::max(0, n_heads);
  offsets_.assign(static_cast<std::size_t>(n_heads_), 0.0);
  heads_.assign(static_cast<std::size_t>(n_heads_), Sums{});
  pending_heads_.assign(static_cast<std::size_t>(n_heads_), Sums{});
  total_ = pending_total_ = Sums{};
  lag_xy_ = lag_xx_ = pending_xy_ = pending_xx_ = 0.0;
  has_last_ = false;
  excluded_ = 0;
  ready_ = false;
  if (grams.empty()) return;

  // Median and MAD for the gross-pack cut.
  scratch_.assign(grams.begin(), grams.end());
  const std::size_t mid = scratch_.size() / 2;
  std::nth_element(scratch_.begin(), scratch_.begin() + static_cast<std::ptrdiff_t>(mid),
                   scratch_.end());
  const double median = scratch_[mid];
  for (double& v : scratch_) v = std::fabs(v - median);
  std::nth_element(scratch_.begin(), scratch_.begin() + static_cast<std::ptrdiff_t>(mid),
                   scratch_.end());
  const double mad_sigma = 1.4826 * scratch_[mid];
  const double cut = mad_sigma > 0.0 ? 5.0 * mad_sigma : INFINITY;

  ref_ = median;
  auto head_of = [&](std::size_t i) {
    const int h = heads.size() == grams.size() ? heads[i] : -1;
    return h >= 0 && h < n_heads_ ? h : -1;
  };
  for (std::size_t i = 0; i < grams.size(); ++i) {
    if (std::fabs(grams[i] - median) > cut) {
      ++excluded_;
      continue;
    }
    const double x = grams[i] - ref_;
    total_.Add(x);
    const int h = head_of(i);
    if (h >= 0) heads_[static_cast<std::size_t>(h)].Add(x);
  }
  if (total_.n < 2.0) return;
  Recompute();
  // Lag-1 autocorrelation of the within-head residuals (consecutive kept packs).
  bool has_prev = false;
  double prev = 0.0;
  for (std::size_t i = 0; i < grams.size(); ++i) {
    if (std::fabs(grams[i] - median) > cut) {
      has_prev = false;
      continue;
    }
    const double r = Residual(grams[i], head_of(i));
    if (has_prev) {
      lag_xy_ += r * prev;
      lag_xx_ += prev * prev;
    }
    prev = r;
    has_prev = true;
  }
  Recompute();
  ready_ = sigma_ > 0.0;
}

void RobustBaseline::Recompute() {
  level_ = ref_ + total_.s / total_.n;
  double within = 0.0, dof = 0.0, head_packs = 0.0;
  for (int h = 0; h < n_heads_; ++h) {
    const Sums& s = heads_[static_cast<std::size_t>(h)];
    if (s.n >= 2.0) {
      offsets_[static_cast<std::size_t>(h)] = ref_ + s.s / s.n - level_;
      within += s.ss - s.s * s.s / s.n;
      dof += s.n - 1.0;
      head_packs += s.n;
    } else {
      offsets_[static_cast<std::size_t>(h)] = 0.0;
    }
  }
  // Packs without a usable head share one group about the overall mean.
  const double rest_n = total_.n - head_packs;
  if (dof < 1.0 || rest_n > 0.5 * total_.n) {
    within = total_.ss - total_.s * total_.s / total_.n;
    dof = total_.n - 1.0;
  }
  sigma_ = dof > 0.0 ? std::sqrt(std::max(0.0, within) / dof) : 0.0;
  // A floor keeps z finite on a line whose readings never change; the stuck
  // detector, not a division by zero, is what should speak about that.
  sigma_ = std::max(sigma_, 1e-6 * std::max(1.0, std::fabs(level_)));
  phi_ = lag_xx_ > 0.0 ? std::clamp(lag_xy_ / lag_xx_, -0.5, 0.8) : 0.0;
}

void RobustBaseline::Accumulate(double grams, int head) {
  if (!ready_) return;
  const double r = Residual(grams, head);
  if (has_last_) {
    pending_xy_ += r * last_residual_;
    pending_xx_ += last_residual_ * last_residual_;
  }
  last_residual_ = r;
  has_last_ = true;
  const double x = grams - ref_;
  pending_total_.Add(x);
  if (head >= 0 && head < n_heads_) pending_heads_[static_cast<std::size_t>(head)].Add(x);
}

void RobustBaseline::CommitBlock() {
  if (pending_total_.n <= 0.0) return;
  const double after = total_.n + pending_total_.n;
  if (after > max_weight_) {
    const double f = std::max(0.0, (max_weight_ - pending_total_.n) / total_.n);
    total_.Scale(f);
    for (auto& s : heads_) s.Scale(f);
    lag_xy_ *= f;
    lag_xx_ *= f;
  }
  total_.Merge(pending_total_);
  for (int h = 0; h < n_heads_; ++h) {
    heads_[static_cast<std::size_t>(h)].Merge(pending_heads_[static_cast<std::size_t>(h)]);
  }
  lag_xy_ += pending_xy_;
  lag_xx_ += pending_xx_;
  Recompute();
  DiscardBlock();
}

void RobustBaseline::DiscardBlock() {
  pending_total_ = Sums{};
  for (auto& s : pending_heads_) s = Sums{};
  pending_xy_ = pending_xx_ = 0.0;
  has_last_ = false;
}

double RobustBaseline::AutocorrelationInflation() const {
  return std::sqrt((1.0 + phi_) / (1.0 - phi_));
}

double RobustBaseline::LevelStdError() const {
  return total_.n > 0.0 ? AutocorrelationInflation() / std::sqrt(total_.n) : 1.0;
}

double RobustBaseline::OffsetStdError(int head) const {
  const double n = head_weight(head);
  return n > 0.0 ? 1.0 / std::sqrt(n) : 1.0;
}

double RobustBaseline::SigmaRelError() const {
  const double dof = total_.n - std::max(1, n_heads_);
  return dof > 1.0 ? 1.0 / std::sqrt(2.0 * dof) : 1.0;
}

double RobustBaseline::InflationRelError() const {
  const double n = total_.n;
  return n > 1.0 ? 1.0 / std::sqrt((1.0 - phi_ * phi_) * n) : 1.0;
}

RobustBaseline::State RobustBaseline::SaveState() const {
  State s;
  s.ready = ready_;
  s.n_heads = n_heads_;
  s.ref = ref_;
  s.level = level_;
  s.sigma = sigma_;
  s.phi = phi_;
  s.offsets = offsets_;
  s.total = total_;
  s.heads = heads_;
  s.lag_xy = lag_xy_;
  s.lag_xx = lag_xx_;
  s.pending_total = pending_total_;
  s.pending_heads = pending_heads_;
  s.pending_xy = pending_xy_;
  s.pending_xx = pending_xx_;
  s.last_residual = last_residual_;
  s.has_last = has_last_;
  s.excluded = excluded_;
  return s;
}

bool RobustBaseline::RestoreState(const State& s) {
  const auto heads = static_cast<std::size_t>(s.n_heads);
  if (s.n_heads < 0 || s.offsets.size() != heads || s.heads.size() != heads ||
      s.pending_heads.size() != heads) {
    return false;
  }
  ready_ = s.ready;
  n_heads_ = s.n_heads;
  ref_ = s.ref;
  level_ = s.level;
  sigma_ = s.sigma;
  phi_ = s.phi;
  offsets_ = s.offsets;
  total_ = s.total;
  heads_ = s.heads;
  lag_xy_ = s.lag_xy;
  lag_xx_ = s.lag_xx;
  pending_total_ = s.pending_total;
  pending_heads_ = s.pending_heads;
  pending_xy_ = s.pending_xy;
  pending_xx_ = s.pending_xx;
  last_residual_ = s.last_residual;
  has_last_ = s.has_last;
  excluded_ = static_cast<std::size_t>(s.excluded);
  return true;
}

}  // namespace heft
