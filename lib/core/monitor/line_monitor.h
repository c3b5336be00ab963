// line_monitor.h — everything heft knows about one packaging line, pack by pack.
//
// Push(pack) returns findings. Phases after each start (first pack, or a
// return after a silence):
//
//   start ──▶ settling (learn) ──MSER-5 cut──▶ running ──silence──▶ start
//             raise `settling`   clear `settling`, end = first settled pack
//
// While running: a two-sided tabular CUSUM on standardised packs (shift), an
// individuals limit and a gross-pack check (outlier bursts), both sized from
// the line's false-alarm budget (detector_design.h). Mean alarms are held
// while settling. Gross packs and weighing errors never enter the statistics.
//
// Invariants: baseline sigma > 0 once running; at most one open finding per
// kind. Pure and deterministic; not thread-safe (owned by one Plant).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "core/detect/detector_design.h"
#include "core/detect/tabular_cusum.h"
#include "core/model/finding.h"
#include "core/model/pack.h"
#include "core/monitor/line_settings.h"
#include "core/monitor/plant.h"
#include "core/stats/rolling_moments.h"

namespace heft {

class LineMonitor {
 public:
  // `settings` is copied.
  LineMonitor(std::string line, const LineSettings& settings);

  void Push(const Pack& pack, std::vector<Finding>* out);

  // Raises `silence` (once) if no pack arrived for longer than the gap as seen
  // on `now_ms`, a clock comparable with `last_ms` (record time or arrival time).
  void CheckSilence(std::int64_t now_ms, std::int64_t last_ms, std::int64_t index,
                    std::vector<Finding>* out);

  const std::string& line() const { return line_; }
  const LineSettings& settings() const { return settings_; }
  const DetectorDesign& design() const { return design_; }
  bool has_packs() const { return packs_ > 0; }
  bool silent() const { return open_[static_cast<int>(FindingKind::kSilence)]; }
  std::int64_t last_time_ms() const { return last_time_ms_; }
  LineSnapshot Snapshot() const;

 private:
  enum class Phase { kSettling, kRunning };

  bool IsGross(double grams) const;
  void Start(const Pack& pack, std::vector<Finding>* out);
  void Learn(const Pack& pack, std::vector<Finding>* out);
  void Run(const Pack& pack, std::vector<Finding>* out);
  void NoteOutlier(const Pack& pack, const char* detector, std::vector<Finding>* out);
  void MaybeCloseOutlierBurst(const Pack& pack, std::vector<Finding>* out);
  Finding Make(Transition transition, FindingKind kind, Severity severity, const Pack& at) const;
  void Emit(Finding finding, std::vector<Finding>* out);

  std::string line_;
  LineSettings settings_;
  DetectorDesign design_;

  Phase phase_ = Phase::kSettling;
  std::int64_t packs_ = 0;
  std::int64_t error_packs_ = 0;
  std::int64_t gross_packs_ = 0;
  std::int64_t last_index_ = -1;
  std::int64_t last_time_ms_ = 0;
  bool open_[kFindingKindCount] = {};

  // Settling: packs since the start, for the MSER-5 cut.
  std::vector<double> learn_values_;
  std::vector<std::int64_t> learn_indexes_;
  std::size_t learn_target_ = 0;

  // Baseline learnt after settling.
  double baseline_mean_ = 0.0;
  double baseline_sigma_ = 0.0;

  TabularCusum cusum_;
  double shift_ewma_ = 0.0;           // EWMA of z while a shift is open (for clearing)
  std::int64_t shift_raised_index_ = 0;

  std::int64_t outlier_last_index_ = 0;
  std::int64_t outlier_count_ = 0;

  RollingMoments recent_;
};

}  // namespace heft
