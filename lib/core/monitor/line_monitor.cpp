#include "core/monitor/line_monitor.h"

#include <algorithm>
#include <cmath>
#include <span>

#include "core/detect/mser.h"

namespace heft {
namespace {
constexpr std::size_t kRecentWindow = 60;         // packs in the snapshot's rolling level
constexpr std::int64_t kOutlierQuietPacks = 50;   // clean packs that close an outlier burst
constexpr std::int64_t kShiftMinOpenPacks = 20;   // a shift stays open at least this long
constexpr double kShiftClearEwmaLambda = 0.1;     // EWMA used to see the level return
constexpr double kShiftAlarmSigma = 1.5;          // shifts this large are alarms, not warnings
constexpr double kLearnExtensionLimit = 3.0;      // settling may take up to 3 × baseline_packs

int Slot(FindingKind kind) { return static_cast<int>(kind); }
}  // namespace

LineMonitor::LineMonitor(std::string line, const LineSettings& settings)
    : line_(std::move(line)),
      settings_(settings),
      design_(DesignDetectors(settings.false_alarms_per_day, settings.pack_rate_per_min,
                              settings.min_shift_sigma)),
      cusum_(design_.cusum_k, design_.cusum_h),
      recent_(kRecentWindow) {}

Finding LineMonitor::Make(Transition transition, FindingKind kind, Severity severity,
                          const Pack& at) const {
  Finding f;
  f.transition = transition;
  f.kind = kind;
  f.severity = severity;
  f.line = line_;
  f.at = at.index;
  f.at_time_ms = at.time_ms;
  return f;
}

void LineMonitor::Emit(Finding finding, std::vector<Finding>* out) {
  open_[Slot(finding.kind)] = finding.transition == Transition::kRaised;
  out->push_back(std::move(finding));
}

bool LineMonitor::IsGross(double grams) const {
  if (!(grams > 0.0)) return true;
  double reference = 0.0;
  if (settings_.nominal_g) {
    reference = *settings_.nominal_g;
  } else if (phase_ == Phase::kRunning) {
    reference = baseline_mean_;
  } else {
    return false;
  }
  return grams < settings_.gross_low_ratio * reference ||
         grams > settings_.gross_high_ratio * reference;
}

void LineMonitor::Push(const Pack& pack, std::vector<Finding>* out) {
  const bool first = packs_ == 0;
  const std::int64_t gap = pack.time_ms - last_time_ms_;
  if (!first && gap > settings_.silence_ms) {
    // The line was quiet: close (or raise and close) silence, then start again.
    if (!silent()) {
      Finding raised = Make(Transition::kRaised, FindingKind::kSilence, Severity::kWarning, pack);
      raised.onset = last_index_;
      raised.onset_time_ms = last_time_ms_;
      raised.detector = "silence";
      Emit(std::move(raised), out);
    }
  }
  const bool was_silent = silent();
  if (was_silent) {
    Finding cleared = Make(Transition::kCleared, FindingKind::kSilence, Severity::kInfo, pack);
    cleared.onset = last_index_;
    cleared.onset_time_ms = last_time_ms_;
    cleared.end = pack.index;
    cleared.detector = "silence";
    Emit(std::move(cleared), out);
  }
  const bool restart = first || was_silent || gap > settings_.silence_ms;
  ++packs_;
  last_index_ = pack.index;
  last_time_ms_ = std::max(last_time_ms_, pack.time_ms);

  if (pack.status == PackStatus::kError) {
    ++error_packs_;
    return;
  }
  if (restart) Start(pack, out);
  if (IsGross(pack.grams)) {
    ++gross_packs_;
    NoteOutlier(pack, "gross_pack", out);
    return;
  }
  if (phase_ == Phase::kSettling) {
    Learn(pack, out);
  } else {
    Run(pack, out);
  }
}

void LineMonitor::Start(const Pack& pack, std::vector<Finding>* out) {
  // A new start holds mean alarms: close what the old run left open.
  for (FindingKind kind : {FindingKind::kShift, FindingKind::kOutlier}) {
    if (!open_[Slot(kind)]) continue;
    Finding cleared = Make(Transition::kCleared, kind, Severity::kInfo, pack);
    cleared.detector = "restart";
    Emit(std::move(cleared), out);
  }
  phase_ = Phase::kSettling;
  learn_values_.clear();
  learn_indexes_.clear();
  learn_target_ = static_cast<std::size_t>(std::max(30, settings_.baseline_packs));
  recent_.Clear();
  if (!open_[Slot(FindingKind::kSettling)]) {
    Finding raised = Make(Transition::kRaised, FindingKind::kSettling, Severity::kInfo, pack);
    raised.onset = pack.index;
    raised.onset_time_ms = pack.time_ms;
    raised.detector = "mser5";
    Emit(std::move(raised), out);
  }
}

void LineMonitor::Learn(const Pack& pack, std::vector<Finding>* out) {
  recent_.Add(pack.grams);
  learn_values_.push_back(pack.grams);
  learn_indexes_.push_back(pack.index);
  if (learn_values_.size() < learn_target_) return;

  const MserResult cut = MserBatched(std::span<const double>(learn_values_), 5);
  const auto limit = static_cast<std::size_t>(kLearnExtensionLimit * settings_.baseline_packs);
  if (cut.at_search_limit && learn_values_.size() < limit) {
    // The best cut is as late as MSER may look: the level is still moving.
    learn_target_ += static_cast<std::size_t>(std::max(15, settings_.baseline_packs / 2));
    return;
  }
  const std::span<const double> kept(learn_values_.data() + cut.truncate,
                                     learn_values_.size() - cut.truncate);
  RollingMoments moments(kept.size());
  for (double x : kept) moments.Add(x);
  baseline_mean_ = moments.Mean();
  double sigma = moments.MovingRangeSigma();
  if (!(sigma > 0.0)) sigma = moments.StdDev();
  // A floor keeps z finite on a line whose readings never change; the stuck
  // detector, not a division by zero, is what should speak about that.
  baseline_sigma_ = std::max(sigma, 1e-6 * std::max(1.0, std::fabs(baseline_mean_)));

  phase_ = Phase::kRunning;
  cusum_.Reset(design_.cusum_h / 2.0);  // 50 % head start (fast initial response)
  Finding cleared = Make(Transition::kCleared, FindingKind::kSettling, Severity::kInfo, pack);
  cleared.onset = learn_indexes_.front();
  cleared.end = learn_indexes_[cut.truncate];
  cleared.level_g = baseline_mean_;
  cleared.detector = "mser5";
  Emit(std::move(cleared), out);
  learn_values_.clear();
  learn_values_.shrink_to_fit();
  learn_indexes_.clear();
  learn_indexes_.shrink_to_fit();
}

void LineMonitor::Run(const Pack& pack, std::vector<Finding>* out) {
  recent_.Add(pack.grams);
  const double z = (pack.grams - baseline_mean_) / baseline_sigma_;
  if (std::fabs(z) > design_.individuals_limit) {
    NoteOutlier(pack, "individuals_limit", out);
  } else {
    MaybeCloseOutlierBurst(pack, out);
  }

  const int shift_slot = Slot(FindingKind::kShift);
  if (open_[shift_slot]) {
    shift_ewma_ += kShiftClearEwmaLambda * (z - shift_ewma_);
    if (pack.index - shift_raised_index_ >= kShiftMinOpenPacks &&
        std::fabs(shift_ewma_) < design_.cusum_k) {
      Finding cleared = Make(Transition::kCleared, FindingKind::kShift, Severity::kInfo, pack);
      cleared.level_g = recent_.Mean();
      cleared.detector = "cusum";
      Emit(std::move(cleared), out);
      cusum_.Reset(design_.cusum_h / 2.0);
    }
    return;
  }
  const TabularCusum::Signal signal = cusum_.Update(z, pack.index);
  if (signal == TabularCusum::Signal::kNone) return;

  const double shift_sigma = cusum_.EstimatedShift(signal);
  const bool up = signal == TabularCusum::Signal::kUp;
  Finding raised = Make(Transition::kRaised, FindingKind::kShift,
                        std::fabs(shift_sigma) >= kShiftAlarmSigma ? Severity::kAlarm
                                                                   : Severity::kWarning,
                        pack);
  raised.onset = up ? cusum_.upper_onset() : cusum_.lower_onset();
  raised.size_sigma = shift_sigma;
  raised.size_g = shift_sigma * baseline_sigma_;
  raised.level_g = baseline_mean_ + shift_sigma * baseline_sigma_;
  raised.detector = "cusum";
  Emit(std::move(raised), out);
  shift_ewma_ = shift_sigma;
  shift_raised_index_ = pack.index;
  cusum_.Reset(0.0);
}

void LineMonitor::NoteOutlier(const Pack& pack, const char* detector,
                              std::vector<Finding>* out) {
  outlier_last_index_ = pack.index;
  if (open_[Slot(FindingKind::kOutlier)]) {
    ++outlier_count_;
    return;
  }
  outlier_count_ = 1;
  Finding raised = Make(Transition::kRaised, FindingKind::kOutlier, Severity::kWarning, pack);
  raised.onset = pack.index;
  raised.onset_time_ms = pack.time_ms;
  raised.level_g = pack.grams;
  if (phase_ == Phase::kRunning) {
    raised.size_g = pack.grams - baseline_mean_;
    raised.size_sigma = (pack.grams - baseline_mean_) / baseline_sigma_;
  }
  raised.detector = detector;
  Emit(std::move(raised), out);
}

void LineMonitor::MaybeCloseOutlierBurst(const Pack& pack, std::vector<Finding>* out) {
  if (!open_[Slot(FindingKind::kOutlier)]) return;
  if (pack.index - outlier_last_index_ < kOutlierQuietPacks) return;
  Finding cleared = Make(Transition::kCleared, FindingKind::kOutlier, Severity::kInfo, pack);
  cleared.end = outlier_last_index_;
  cleared.size_g = static_cast<double>(outlier_count_);  // packs in the burst
  cleared.detector = "outlier_burst";
  Emit(std::move(cleared), out);
}

void LineMonitor::CheckSilence(std::int64_t now_ms, std::int64_t last_ms, std::int64_t index,
                               std::vector<Finding>* out) {
  if (packs_ == 0 || silent() || now_ms - last_ms <= settings_.silence_ms) return;
  Finding raised;
  raised.transition = Transition::kRaised;
  raised.kind = FindingKind::kSilence;
  raised.severity = Severity::kWarning;
  raised.line = line_;
  raised.at = index;
  raised.at_time_ms = now_ms;
  raised.onset = last_index_;
  raised.onset_time_ms = last_time_ms_;
  raised.detector = "silence";
  Emit(std::move(raised), out);
}

LineSnapshot LineMonitor::Snapshot() const {
  LineSnapshot s;
  s.line = line_;
  s.packs = packs_;
  s.last_time_ms = last_time_ms_;
  s.settling = phase_ == Phase::kSettling;
  s.level_g = recent_.Mean();
  s.sigma_g = recent_.MovingRangeSigma();
  s.baseline_level_g = baseline_mean_;
  s.baseline_sigma_g = baseline_sigma_;
  s.open_findings = static_cast<int>(std::count(std::begin(open_), std::end(open_), true));
  return s;
}

}  // namespace heft
