// line_monitor_checkpoint.cpp — LineMonitor::SaveCheckpoint / RestoreCheckpoint.
//
// Kept apart from line_monitor.cpp (the per-pack path). Every member of
// LineMonitor that changes while packs come in is either saved here or derived
// again by ArmDetectors(); a new such member must be added to
// LineMonitorCheckpoint, the codec (io/checkpoint_codec.cpp) and both
// functions below. tests/unit/line_monitor_checkpoint_test.cpp compares
// restored and uninterrupted monitors finding by finding.
#include <cmath>
#include <string>

#include "core/monitor/line_monitor.h"
#include "core/monitor/settings_fingerprint.h"

namespace heft {
namespace {
// The most heads a monitor learns from the packs (kMaxInferredHeads in line_monitor.cpp).
constexpr int kMaxInferredHeadsForCheckpoint = 64;
}  // namespace

LineMonitorCheckpoint LineMonitor::SaveCheckpoint() const {
  LineMonitorCheckpoint c;
  c.settings_fingerprint = MonitorSettingsFingerprint(settings_);
  c.running = phase_ == Phase::kRunning;
  c.packs = packs_;
  c.error_packs = error_packs_;
  c.gross_packs = gross_packs_;
  c.last_index = last_index_;
  c.last_time_ms = last_time_ms_;
  for (int k = 0; k < kFindingKindCount; ++k) {
    const auto u = static_cast<std::size_t>(k);
    c.open[u] = open_[k];
    c.raised_at[u] = raised_at_[k];
    c.raised_at_pack[u] = raised_at_pack_[k];
  }
  c.learn_values = learn_values_;
  c.learn_heads = learn_heads_;
  c.learn_indexes = learn_indexes_;
  c.learn_target = learn_target_;
  c.start_index = start_index_;
  c.settling_alarmed = settling_alarmed_;
  c.heads = heads_;
  c.baseline = baseline_.SaveState();
  c.inflation = inflation_;
  c.block_count = block_count_;
  c.block_clean = block_clean_;
  c.cusum_up = cusum_up_.SaveState();
  c.cusum_down = cusum_down_.SaveState();
  c.ewma = ewma_.SaveState();
  c.mean_clear_ewma = mean_clear_ewma_;
  c.mean_open_size = mean_open_size_;
  for (int i = 0; i < mean_raise_count_; ++i) {
    const MeanRaise& r = mean_raises_[static_cast<std::size_t>(i)];
    c.mean_raises.push_back({r.pack, r.side, r.index, r.level});
  }
  c.mean_open_side = mean_open_side_;
  c.mean_open_onset = mean_open_onset_;
  c.mean_open_refit_done = mean_open_refit_done_;
  c.head_cusums = head_cusums_.SaveState();
  c.off_head = off_head_;
  c.off_head_shift = off_head_shift_;
  c.spread_scale = spread_scale_;
  c.subgroup_count = subgroup_count_;
  c.subgroup_sum = subgroup_sum_;
  c.rules = rules_.SaveState();
  c.spread = spread_.SaveState();
  c.since_cycle_test = since_cycle_test_;
  c.stuck = stuck_.SaveState();
  c.stuck_start_index = stuck_start_index_;
  c.ring.reserve(ring_count_);
  for (std::size_t back = ring_count_; back-- > 0;) {
    const Entry& e = Recent(back);
    c.ring.push_back({e.z, e.white, e.index, e.time_ms, e.head});
  }
  c.last_z = last_z_;
  c.outlier_last_index = outlier_last_index_;
  c.outlier_last_pack = outlier_last_pack_;
  c.outlier_count = outlier_count_;
  c.outlier_side_run = outlier_side_run_;
  c.recent = recent_.SaveState();
  return c;
}

Status LineMonitor::RestoreCheckpoint(const LineMonitorCheckpoint& c) {
  const auto refuse = [this](const std::string& why) {
    return Status::Error("line " + line_ + ": checkpoint not restored: " + why);
  };
  if (packs_ != 0) return refuse("the monitor has already taken packs");
  if (c.settings_fingerprint != MonitorSettingsFingerprint(settings_)) {
    return refuse("the line's targets or detection settings changed since it was saved");
  }
  // Shapes that the settings fix; a checkpoint that does not fit is damaged.
  const std::size_t n_learn = c.learn_values.size();
  if (c.learn_heads.size() != n_learn || c.learn_indexes.size() != n_learn ||
      n_learn > learn_capacity_ || c.learn_target > learn_capacity_) {
    return refuse("settling buffers do not fit the settings");
  }
  if (c.heads < 0 || c.heads > std::max(kMaxInferredHeadsForCheckpoint, settings_.heads)) {
    return refuse("head count " + std::to_string(c.heads) + " out of range");
  }
  if (c.ring.size() > ring_.size()) return refuse("recent-pack window larger than the settings'");
  if (c.mean_raises.size() > mean_raises_.size()) return refuse("too many recent mean raises");
  if (c.packs < 0 || !(c.inflation > 0.0) || !std::isfinite(c.inflation) ||
      !(c.spread_scale >= 1.0) || !std::isfinite(c.spread_scale)) {
    return refuse("counters out of range");
  }
  RobustBaseline baseline;
  if (!baseline.RestoreState(c.baseline)) return refuse("baseline does not fit its head count");
  RollingMoments recent(recent_.capacity());
  if (!recent.RestoreState(c.recent)) return refuse("rolling level does not fit the settings");
  if (c.running) {
    if (!(baseline.sigma() > 0.0) || baseline.heads() != c.heads) {
      return refuse("running line without a usable baseline");
    }
    const std::size_t head_sums = c.heads >= 2 ? static_cast<std::size_t>(c.heads) : 0;
    if (c.head_cusums.size() != head_sums) return refuse("head sums do not fit the head count");
  }

  // Everything fits: nothing below can fail.
  phase_ = c.running ? Phase::kRunning : Phase::kSettling;
  packs_ = c.packs;
  error_packs_ = c.error_packs;
  gross_packs_ = c.gross_packs;
  last_index_ = c.last_index;
  last_time_ms_ = c.last_time_ms;
  for (int k = 0; k < kFindingKindCount; ++k) {
    const auto u = static_cast<std::size_t>(k);
    open_[k] = c.open[u];
    raised_at_[k] = c.raised_at[u];
    raised_at_pack_[k] = c.raised_at_pack[u];
  }
  learn_values_.assign(c.learn_values.begin(), c.learn_values.end());
  learn_heads_.assign(c.learn_heads.begin(), c.learn_heads.end());
  learn_indexes_.assign(c.learn_indexes.begin(), c.learn_indexes.end());
  learn_target_ = static_cast<std::size_t>(c.learn_target);
  start_index_ = c.start_index;
  settling_alarmed_ = c.settling_alarmed;
  heads_ = c.heads;
  baseline_ = std::move(baseline);
  inflation_ = c.inflation;
  if (c.running) {
    // The same set-up as at the end of settling, then the statistics since.
    ArmDetectors();
    cusum_up_.RestoreState(c.cusum_up);
    cusum_down_.RestoreState(c.cusum_down);
    ewma_.RestoreState(c.ewma);
    head_cusums_.RestoreState(c.head_cusums);
    subgroup_count_ = c.subgroup_count;
    subgroup_sum_ = c.subgroup_sum;
    rules_.RestoreState(c.rules);
    spread_.RestoreState(c.spread);
    since_cycle_test_ = c.since_cycle_test;
  }
  block_count_ = c.block_count;
  block_clean_ = c.block_clean;
  mean_clear_ewma_ = c.mean_clear_ewma;
  mean_open_size_ = c.mean_open_size;
  mean_raise_count_ = static_cast<int>(c.mean_raises.size());
  for (std::size_t i = 0; i < c.mean_raises.size(); ++i) {
    const LineMonitorCheckpoint::MeanRaise& r = c.mean_raises[i];
    mean_raises_[i] = {r.pack, r.side, r.index, r.level};
  }
  off_head_ = c.off_head;
  off_head_shift_ = c.off_head_shift;
  spread_scale_ = c.spread_scale;
  mean_open_side_ = c.mean_open_side;
  mean_open_onset_ = c.mean_open_onset;
  mean_open_refit_done_ = c.mean_open_refit_done;
  stuck_.RestoreState(c.stuck);
  stuck_start_index_ = c.stuck_start_index;
  // Oldest first from slot 0: the ring's logical order is what the detectors read.
  for (std::size_t i = 0; i < c.ring.size(); ++i) {
    const LineMonitorCheckpoint::Entry& e = c.ring[i];
    ring_[i] = {e.z, e.white, e.index, e.time_ms, e.head};
    ring_white_[i] = e.white;
  }
  ring_count_ = c.ring.size();
  ring_next_ = ring_count_ % ring_.size();
  RebuildTurnSum();
  last_z_ = c.last_z;
  outlier_last_index_ = c.outlier_last_index;
  outlier_last_pack_ = c.outlier_last_pack;
  outlier_count_ = c.outlier_count;
  outlier_side_run_ = c.outlier_side_run;
  recent_ = std::move(recent);
  return Status::Ok();
}

}  // namespace heft
