// line_monitor_checkpoint.h — everything a LineMonitor has learnt and is
// tracking, as a plain value, so heftd can stop and continue a line where it
// was (restart without amnesia).
//
// LineMonitor::SaveCheckpoint() fills it; RestoreCheckpoint() into a fresh
// monitor built with the same settings gives a monitor that then finds exactly
// what the uninterrupted one would (same findings, same indexes): the
// statistics, the open findings and the recent-pack windows are all kept (a
// few kilobytes per line: the periodogram ring is the bulk). Detector designs
// (thresholds, references) are not stored: they are derived again from the
// settings and the stored baseline by the same code that arms them at the end
// of settling. Serialised by io/checkpoint_codec.h. Plain value; thread-agnostic.
#pragma once

#include <array>
#include <cstdint>
#include <vector>

#include "core/detect/ewma_chart.h"
#include "core/detect/head_cusum.h"
#include "core/detect/log_variance_cusum.h"
#include "core/detect/robust_baseline.h"
#include "core/detect/run_rules.h"
#include "core/detect/stuck_reading.h"
#include "core/detect/tabular_cusum.h"
#include "core/model/finding.h"
#include "core/stats/rolling_moments.h"

namespace heft {

struct LineMonitorCheckpoint {
  // MonitorSettingsFingerprint() of the settings it was made under.
  std::uint64_t settings_fingerprint = 0;

  // Record clock and counters.
  bool running = false;  // false: settling
  std::int64_t packs = 0, error_packs = 0, gross_packs = 0;
  std::int64_t last_index = -1, last_time_ms = 0;
  std::array<bool, kFindingKindCount> open{};
  std::array<std::int64_t, kFindingKindCount> raised_at{};
  std::array<std::int64_t, kFindingKindCount> raised_at_pack{};

  // Settling (packs since the start).
  std::vector<double> learn_values;
  std::vector<int> learn_heads;
  std::vector<std::int64_t> learn_indexes;
  std::uint64_t learn_target = 0;
  std::int64_t start_index = 0;
  bool settling_alarmed = false;
  int heads = 0;

  // Baseline, and the autocorrelation inflation the detectors were armed with.
  RobustBaseline::State baseline;
  double inflation = 1.0;
  std::int64_t block_count = 0;
  bool block_clean = true;

  // Mean detectors.
  TabularCusum::State cusum_up, cusum_down;
  EwmaChart::State ewma;
  double mean_clear_ewma = 0.0, mean_open_size = 0.0;
  struct MeanRaise {
    std::int64_t pack = 0;
    int side = 0;
    std::int64_t index = 0;
    double level = 0.0;
  };
  std::vector<MeanRaise> mean_raises;  // the recent ones, oldest first
  int mean_open_side = 0;
  std::int64_t mean_open_onset = 0;
  bool mean_open_refit_done = false;

  // Head, subgroup, spread, cycle and stuck detectors.
  std::vector<HeadCusums::Sums> head_cusums;
  int off_head = -1;  // head an open head-CUSUM oscillation named, its shift (σ)
  double off_head_shift = 0.0;
  double spread_scale = 1.0;  // σ ratio of an open spread finding
  int subgroup_count = 0;
  double subgroup_sum = 0.0;
  RunRules::State rules;
  LogVarianceCusum::State spread;
  std::int64_t since_cycle_test = 0;
  StuckReading::State stuck;
  std::int64_t stuck_start_index = 0;

  // Recent running packs, oldest first.
  struct Entry {
    double z = 0.0, white = 0.0;
    std::int64_t index = 0, time_ms = 0;
    int head = -1;
  };
  std::vector<Entry> ring;
  double last_z = 0.0;

  std::int64_t outlier_last_index = 0, outlier_last_pack = 0, outlier_count = 0;
  int outlier_side_run = 0;

  RollingMoments::State recent;
};

}  // namespace heft
