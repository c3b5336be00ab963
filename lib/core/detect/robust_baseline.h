// robust_baseline.h — the in-control level, per-head offsets, within-head sigma and
// lag-1 autocorrelation of a line, learnt after settling and kept fresh.
//
// Learn(): from the settled packs, gross packs are dropped first (beyond 5 scaled
// MADs of the median: 1.4826·MAD estimates σ for normal data — common practice),
// then level = mean, head offsets = head mean − level (heads known), σ = pooled
// within-head standard deviation, φ = lag-1 autocorrelation of the within-head
// residuals in arrival order.
// Freshness: the monitor Accumulate()s packs that passed its checks into a pending
// block and either CommitBlock()s it (nothing happened meanwhile) or DiscardBlock()s
// it; committed sums are capped at `max_weight` packs (older data fade by blocks), so
// a baseline follows slow, accepted changes but a fault does not teach itself in.
// Standard errors (LevelStdError, OffsetStdError, SigmaRelError) give the
// detectors their allowance for the baseline's own uncertainty: wide after a start,
// narrowing as packs accumulate. Pure; O(1) per pack (O(heads) per commit).
#pragma once

#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

namespace heft {

class RobustBaseline {
 public:
  explicit RobustBaseline(double max_weight = 20000.0) : max_weight_(max_weight) {}

  // Replaces the baseline. `heads` may be empty (no head information) or one entry
  // per value (values outside [0, n_heads) count as "head unknown").
  void Learn(std::span<const double> grams, std::span<const int> heads, int n_heads);

  bool ready() const { return ready_; }
  double level() const { return level_; }
  double sigma() const { return sigma_; }
  double phi() const { return phi_; }
  int heads() const { return n_heads_; }
  double offset(int head) const {
    return head >= 0 && head < n_heads_ ? offsets_[static_cast<std::size_t>(head)] : 0.0;
  }
  double weight() const { return total_.n; }
  double head_weight(int head) const {
    return head >= 0 && head < n_heads_ ? heads_[static_cast<std::size_t>(head)].n : 0.0;
  }
  std::size_t excluded() const { return excluded_; }

  // grams − level − offset(head).
  double Residual(double grams, int head) const { return grams - level_ - offset(head); }

  void Accumulate(double grams, int head);
  void CommitBlock();
  void DiscardBlock();
  std::size_t pending() const { return static_cast<std::size_t>(pending_total_.n); }

  // sqrt((1+φ)/(1−φ)): the long-run σ of a mean relative to the per-pack σ (AR(1)).
  double AutocorrelationInflation() const;
  // Standard error of the level and of one head's offset, in σ units.
  double LevelStdError() const;
  double OffsetStdError(int head) const;
  // Relative standard error of σ: 1/sqrt(2(n − heads)).
  double SigmaRelError() const;
  // Relative standard error of AutocorrelationInflation(): its log has slope 1/(1−φ²)
  // in φ, and φ̂ has standard error sqrt((1−φ²)/n) (the large-sample AR(1) result,
  // e.g. Box & Jenkins; from memory), so 1/sqrt((1−φ²)·n).
  double InflationRelError() const;

  // Restart checkpoint (line_monitor_checkpoint.h): everything learnt and accumulated,
  // as plain values. RestoreState refuses (false) per-head vectors that do not
  // match the head count.
  struct Sums {
    double n = 0.0, s = 0.0, ss = 0.0;  // about ref_
    void Add(double x) {
      n += 1.0;
      s += x;
      ss += x * x;
    }
    void Merge(const Sums& o) {
      n += o.n;
      s += o.s;
      ss += o.ss;
    }
    void Scale(double f) {
      n *= f;
      s *= f;
      ss *= f;
    }
  };
  struct State {
    bool ready = false;
    int n_heads = 0;
    double ref = 0.0, level = 0.0, sigma = 0.0, phi = 0.0;
    std::vector<double> offsets;
    Sums total;
    std::vector<Sums> heads;
    double lag_xy = 0.0, lag_xx = 0.0;
    Sums pending_total;
    std::vector<Sums> pending_heads;
    double pending_xy = 0.0, pending_xx = 0.0, last_residual = 0.0;
    bool has_last = false;
    std::uint64_t excluded = 0;
  };
  State SaveState() const;
  bool RestoreState(const State& s);

 private:
  void Recompute();

  double max_weight_;
  bool ready_ = false;
  int n_heads_ = 0;
  double ref_ = 0.0;
  double level_ = 0.0, sigma_ = 0.0, phi_ = 0.0;
  std::vector<double> offsets_;
  Sums total_;
  std::vector<Sums> heads_;             // committed, per head; unknown heads only in total_
  double lag_xy_ = 0.0, lag_xx_ = 0.0;  // Σ rₜrₜ₋₁, Σ rₜ² (committed)
  Sums pending_total_;
  std::vector<Sums> pending_heads_;
  double pending_xy_ = 0.0, pending_xx_ = 0.0;
  double last_residual_ = 0.0;
  bool has_last_ = false;
  std::size_t excluded_ = 0;
  std::vector<double> scratch_;
};

}  // namespace heft
