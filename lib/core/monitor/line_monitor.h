// line_monitor.h — everything heft knows about one packaging line, pack by pack.
//
// Push(pack) returns findings. Phases after each start (first pack, or a
// return after a silence):
//
//   start ──▶ settling (learn) ──settle fit──▶ running ──silence──▶ start
//             raise `settling`   clear `settling`, end = first settled pack
//
// Settling: MSER-5 plus a fitted decay (first order or under-damped, settle_fit.h);
// an alarm if it lasts longer than `settling_alarm_packs`. Mean and cycle alarms
// are held while settling.
// Running, on residuals z = (pack − level − head offset)/σ from RobustBaseline:
//   shift        FIR tabular CUSUM (onset, size)            ┐ step-vs-ramp fit
//   drift        EWMA, small λ                              ┘ (change_shape.h) decides
//   run rules    Western Electric / Nelson on subgroup means (run_rules.h)
//   oscillation  per-head CUSUMs (names the head) and a periodogram (period)
//   spread       CUSUM on the log of subgroup variances
//   stuck        identical readings in a row (all phases)
//   outlier      gross packs and packs beyond the individuals limit; a burst is an alarm
// Every threshold comes from the line's false-alarm budget (detector_design.h), with
// allowances for autocorrelation (σ of means inflated by √((1+φ)/(1−φ))) and for the
// baseline's own estimation error (shrinking as checked packs are taken in).
//
// Invariants: baseline sigma > 0 once running; at most one open finding per kind
// (an escalation re-raises the open kind with severity alarm). No allocation per pack
// once constructed (buffers are sized up front). Pure and deterministic; not
// thread-safe (owned by one Plant).
#pragma once

#include <array>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "core/detect/design_cache.h"
#include "core/detect/detector_design.h"
#include "core/detect/ewma_chart.h"
#include "core/detect/head_cusum.h"
#include "core/detect/log_variance_cusum.h"
#include "core/detect/periodicity_test.h"
#include "core/detect/robust_baseline.h"
#include "core/detect/run_rules.h"
#include "core/detect/stuck_reading.h"
#include "core/detect/tabular_cusum.h"
#include "core/model/finding.h"
#include "core/model/pack.h"
#include "core/model/status.h"
#include "core/monitor/line_monitor_checkpoint.h"
#include "core/monitor/line_settings.h"
#include "core/monitor/plant.h"
#include "core/stats/rolling_moments.h"

namespace heft {

class LineMonitor {
 public:
  // `settings` is copied.
  // `designs`, when given, is borrowed (it must outlive this monitor) and shares
  // detector designs between lines; without it each design is computed here.
  LineMonitor(std::string line, const LineSettings& settings, DesignCache* designs = nullptr);

  void Push(const Pack& pack, std::vector<Finding>* out);

  // Raises `silence` (once) if no pack arrived for longer than the gap as seen
  // on `now_ms`, a clock comparable with `last_ms` (record time or arrival time).
  void CheckSilence(std::int64_t now_ms, std::int64_t last_ms, std::int64_t index,
                    std::vector<Finding>* out);

  const std::string& line() const { return line_; }
  const LineSettings& settings() const { return settings_; }
  bool has_packs() const { return packs_ > 0; }
  bool silent() const { return open_[static_cast<int>(FindingKind::kSilence)]; }
  bool is_open(FindingKind kind) const { return open_[static_cast<int>(kind)]; }
  std::int64_t last_time_ms() const { return last_time_ms_; }
  LineSnapshot Snapshot() const;
  const RobustBaseline& baseline() const { return baseline_; }
  // Thresholds in force (for `heft design`-like reports and tests).
  double cusum_h() const { return cusum_h_; }
  double ewma_limit_l() const { return ewma_.limit_l(); }
  const RunRuleSettings& run_rule_settings() const { return rules_.settings(); }

  // Restart checkpoint (line_monitor_checkpoint.h, implemented in
  // line_monitor_checkpoint.cpp). RestoreCheckpoint REQUIRES a monitor that has
  // taken no pack; it fails, changing nothing, when the checkpoint was made
  // under other settings (MonitorSettingsFingerprint) or does not fit them.
  // A first pack later than the silence gap after the checkpoint's last one
  // restarts settling as any return after a silence does.
  LineMonitorCheckpoint SaveCheckpoint() const;
  Status RestoreCheckpoint(const LineMonitorCheckpoint& checkpoint);

 private:
  enum class Phase { kSettling, kRunning };
  struct Entry {         // one running pack in the recent-history ring
    double z = 0.0;      // standardised residual
    double white = 0.0;  // z − φ·z_prev (whitened, for the periodogram)
    std::int64_t index = 0;
    std::int64_t time_ms = 0;
    int head = kNoHead;
  };

  bool IsGross(double grams) const;
  void Start(const Pack& pack, std::vector<Finding>* out);
  void Learn(const Pack& pack, std::vector<Finding>* out);
  void FinishSettling(const Pack& pack, std::size_t settle_at, std::vector<Finding>* out);
  void ArmDetectors();
  void Run(const Pack& pack, std::vector<Finding>* out);
  void RunMean(const Pack& pack, double z, std::vector<Finding>* out);
  void RaiseMean(const Pack& pack, const char* detector, int side, double cusum_shift,
                 std::optional<std::int64_t> cusum_onset, std::vector<Finding>* out);
  // Records a mean raise; true (and an oscillation raised) when the last few
  // alternate in side within a short span.
  // While a shift is open, more packs tell a step from a ramp better than the few
  // at the signal did: re-judge it and turn it into a drift when a ramp fits clearly better.
  bool MaybeReclassifyAsDrift(const Pack& pack, std::vector<Finding>* out);
  bool NoteMeanRaise(const Pack& pack, int side, double size_sigma, std::vector<Finding>* out);
  void RunHeads(const Pack& pack, double z, std::vector<Finding>* out);
  int HeadPatternPeriod(std::int64_t onset) const;
  void RunSubgroup(const Pack& pack, double z, std::vector<Finding>* out);
  void RunSpread(const Pack& pack, double z, std::vector<Finding>* out);
  void RunCycles(const Pack& pack, std::vector<Finding>* out);
  void RunStuck(const Pack& pack, std::vector<Finding>* out);
  void RefreshBaseline(const Pack& pack, bool clean);
  void UpdateAllowances();
  void NoteOutlier(const Pack& pack, const char* detector, std::vector<Finding>* out);
  void MaybeCloseOutlierBurst(const Pack& pack, std::vector<Finding>* out);
  Finding Make(Transition transition, FindingKind kind, Severity severity, const Pack& at) const;
  void Emit(Finding finding, std::vector<Finding>* out);
  void Clear(FindingKind kind, const Pack& at, const char* detector, std::vector<Finding>* out);
  const Entry& Recent(std::size_t back) const;  // 0 = newest
  double PacksPerHour() const;

  std::string line_;
  LineSettings settings_;
  DesignCache* designs_ = nullptr;  // borrowed; may be null
  LineBudget budget_;               // ARL budget and individuals limit (DesignLineBudget)

  Phase phase_ = Phase::kSettling;
  std::int64_t packs_ = 0;
  std::int64_t error_packs_ = 0;
  std::int64_t gross_packs_ = 0;
  std::int64_t last_index_ = -1;
  std::int64_t last_time_ms_ = 0;
  bool open_[kFindingKindCount] = {};
  std::int64_t raised_at_[kFindingKindCount] = {};       // record index of the last raise
  std::int64_t raised_at_pack_[kFindingKindCount] = {};  // this line's pack count then

  // Settling: packs since the start.
  std::vector<double> learn_values_;
  std::vector<int> learn_heads_;
  std::vector<std::int64_t> learn_indexes_;
  std::size_t learn_target_ = 0;
  std::size_t learn_capacity_ = 0;
  std::int64_t start_index_ = 0;
  bool settling_alarmed_ = false;
  int heads_ = 0;  // heads in use (settings, or learnt from the packs)

  // Baseline and the allowances derived from it.
  RobustBaseline baseline_;
  double sigma_eff_ = 1.0;    // σ widened for its estimation error
  double inflation_ = 1.0;    // √((1+φ)/(1−φ)) at the end of settling: the CUSUM's design
  double mean_scale_ = 1.0;   // √((1+φ)/(1−φ)) as now learnt, widened for its error
  double level_allow_ = 0.0;  // allowance for the level's error, in units of z/mean_scale_
  double subgroup_sd_ = 1.0;  // σ of a subgroup mean of z
  std::int64_t block_count_ = 0;
  bool block_clean_ = true;

  // Mean detectors.
  double cusum_k_ = 0.5;
  double cusum_h_ = 5.0;
  TabularCusum cusum_up_;    // fed z − allowance: its upper side is the one used
  TabularCusum cusum_down_;  // fed z + allowance: its lower side is the one used
  EwmaChart ewma_;
  double mean_clear_ewma_ = 0.0;  // EWMA of z while a mean finding is open (for clearing)
  double mean_open_size_ = 0.0;
  // Recent mean raises (this line's pack count and side), oldest first: a level
  // that keeps jumping up and down is a swing, not a string of shifts.
  struct MeanRaise {
    std::int64_t pack = 0;
    int side = 0;
    std::int64_t index = 0;  // record index of the raise
    double level = 0.0;      // recent mean − baseline level, σ, at the raise
  };
  std::array<MeanRaise, 4> mean_raises_{};
  int mean_open_side_ = 0;             // +1 / −1 while a shift or drift is open
  std::int64_t mean_open_onset_ = 0;   // its onset (record index)
  bool mean_open_refit_done_ = false;  // a shift is re-judged as a ramp at most once
  int mean_raise_count_ = 0;

  // Head, subgroup, spread, cycle and stuck detectors.
  double head_k_ = 1.0;
  double head_h_ = 6.0;
  HeadCusums head_cusums_;
  std::vector<double> head_allow_;    // per-head offset standard errors, σ units
  double head_relative_scale_ = 1.0;  // 1/√(1 + 1/(heads − 1)) = 1/sd(z − others' mean)
  // The head named by the open oscillation finding and how far it sits from the other
  // heads (z units): the spread detector sees that head's packs re-centred, so one
  // bad head, already reported, does not also read as rising spread over and over.
  int off_head_ = -1;
  double off_head_shift_ = 0.0;
  // While a spread finding is open, the sigma ratio it measured: the mean and head
  // detectors judge residuals against the wider spread, so more scatter, already
  // reported, does not also read as shifts and bad heads.
  double spread_scale_ = 1.0;
  int subgroup_n_ = 5;
  int subgroup_count_ = 0;
  double subgroup_sum_ = 0.0;
  RunRules rules_;
  LogVarianceCusum spread_;
  double spread_k_ = 0.5, spread_h_ = 5.0;
  double spread_z_factor_ = 1.0;  // z to the spread detector's own σ allowance
  PeriodicityTest cycles_;
  std::vector<double> cycle_buffer_;
  void FillCycleBuffer();  // the ring's whitened values, oldest first
  double cycle_p_threshold_ = 1e-6;
  std::int64_t since_cycle_test_ = 0;
  StuckReading stuck_;
  std::int64_t stuck_start_index_ = 0;
  double stuck_chance_ = 1e-7;

  // Recent running packs (ring; capacity = cycle window).
  std::vector<Entry> ring_;
  std::vector<double> ring_white_;  // ring_[i].white again, contiguous for the periodogram
  std::size_t ring_next_ = 0;
  std::size_t ring_count_ = 0;
  double last_z_ = 0.0;
  // Σ z over the newest heads_ ring entries (the last turn), in fixed point: the head
  // detector needs the other heads' sum on every pack, and integer sums are exact
  // whatever the order of adds and removes, so a sum rebuilt after a restart is the
  // very one kept running.
  static std::int64_t FixedZ(double z);
  static constexpr double kFixedZScale = 4294967296.0;  // 2^32 per unit of z
  std::int64_t turn_sum_fixed_ = 0;
  void RebuildTurnSum();
  std::vector<double> scratch_;  // classification window, sized once

  std::int64_t outlier_last_index_ = 0;
  std::int64_t outlier_last_pack_ = 0;  // this line's pack count at the last wild pack
  std::int64_t outlier_count_ = 0;
  int outlier_side_run_ = 0;  // consecutive beyond-limit packs on one side (signed)

  RollingMoments recent_;
};

}  // namespace heft
