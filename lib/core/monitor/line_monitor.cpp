#include "core/monitor/line_monitor.h"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <span>

#include "core/detect/change_shape.h"
#include "core/detect/head_pattern.h"
#include "core/detect/settle_fit.h"

namespace heft {
namespace {
constexpr std::size_t kRecentWindow = 60;        // packs in the snapshot's rolling level
constexpr std::int64_t kOutlierQuietPacks = 50;  // clean packs that close an outlier burst
constexpr std::int64_t kMeanMinOpenPacks = 20;   // a shift/drift stays open at least this long
constexpr double kMeanClearEwmaLambda = 0.1;     // EWMA used to see the level return
// Hysteresis: a mean finding clears only when the level is back within half the
// CUSUM reference, so a small lasting change is not cleared and raised again.
constexpr double kMeanClearFraction = 0.5;
constexpr double kShiftAlarmSigma = 1.5;  // changes this large are alarms, not warnings
constexpr int kMaxInferredHeads = 64;
constexpr int kSwingRaises = 3;                 // alternating mean raises that make a swing
constexpr std::int64_t kSwingSpanPacks = 600;   // ... within this many of the line's packs
constexpr std::int64_t kCreepSpanPacks = 1500;  // same-side mean raises within this: a drift
constexpr double kCreepGrowthSigma = 0.2;  // ... if the level kept moving away (about 1.5 s.e.)
// Shares of the line's false-alarm budget, as multiples of its in-control ARL. The
// CUSUM (1/2) and individuals limit (1/4) shares are set by DesignDetectors; the EWMA
// gets 1/4 and the head CUSUMs, run rules, spread, periodogram and stuck test 1/16
// each. The shares add up to about 1.3 budgets, but several designs err on the quiet
// side (normal theory for the skewed log χ², the run rules' discrete counts) and the
// detectors overlap; `heft score` measures the rate that results (about 0.45 per
// 100,000 in-control packs, 0.8 a day at 120 packs/min, against a budget of 1 a day).
constexpr double kEwmaShare = 4.0;
constexpr double kMinorShare = 16.0;
constexpr std::size_t kShapePrePacks = 30;  // packs before the onset in the shape fit
constexpr double kRampMargin = 0.0;         // SSE (in σ²) a ramp must beat a step by
constexpr std::size_t kMinRampPacks = 25;   // a "ramp" shorter than this is a step
// Re-judging an open shift: every 25 of the line's packs for 400 packs, a ramp must
// beat a step by 8 σ² of squared error (about p < 0.005 for one extra degree of freedom,
// allowing for mild autocorrelation) to turn the shift into a drift.
constexpr std::int64_t kRefitEveryPacks = 25;
constexpr std::int64_t kRefitHorizonPacks = 400;
constexpr double kRefitMargin = 15.0;

int Slot(FindingKind kind) { return static_cast<int>(kind); }

std::size_t CycleWindow(const LineSettings& s) {
  std::size_t n = 16;
  while (n < static_cast<std::size_t>(std::max(16, s.cycle_window_packs))) n *= 2;
  return n;
}

// Variance of the mean of n AR(1) values relative to σ²/n: 1 + 2Σ(1 − k/n)φᵏ.
double MeanVarianceFactor(int n, double phi) {
  double s = 1.0, pk = 1.0;
  for (int k = 1; k < n; ++k) {
    pk *= phi;
    s += 2.0 * (1.0 - static_cast<double>(k) / n) * pk;
  }
  return std::max(0.1, s);
}
}  // namespace

LineMonitor::LineMonitor(std::string line, const LineSettings& settings, DesignCache* designs)
    : line_(std::move(line)),
      settings_(settings),
      designs_(designs),
      budget_(DesignLineBudget(settings.false_alarms_per_day, settings.pack_rate_per_min,
                               settings.min_shift_sigma)),
      cusum_up_(cusum_k_, cusum_h_),  // designed in ArmDetectors, once settled
      cusum_down_(cusum_k_, cusum_h_),
      // λ from the settings; L for the EWMA's share of the budget, by the Brook–Evans
      // chain (ewma_chart.h), memoised per plant.
      ewma_(settings.drift_lambda,
            designs
                ? designs->EwmaLimit(settings.drift_lambda, kEwmaShare * budget_.arl0_packs)
                : EwmaChart::LimitForArl(settings.drift_lambda, kEwmaShare * budget_.arl0_packs)),
      head_cusums_(0, 1.0, 6.0),
      rules_(RunRuleSettings::Published()),
      spread_(5, 0.5, 5.0),
      cycles_(CycleWindow(settings)),
      stuck_(settings.stuck_packs),
      recent_(kRecentWindow) {
  learn_capacity_ = static_cast<std::size_t>(std::max(
      {4 * std::max(30, settings_.baseline_packs), settings_.settling_alarm_packs + 300, 600}));
  learn_values_.reserve(learn_capacity_);
  learn_heads_.reserve(learn_capacity_);
  learn_indexes_.reserve(learn_capacity_);
  ring_.resize(cycles_.window());
  ring_white_.resize(cycles_.window());
  cycle_buffer_.resize(cycles_.window());
  scratch_.reserve(cycles_.window());
  stuck_chance_ = 1.0 / (kMinorShare * budget_.arl0_packs);
  const double hop = std::max(1, settings_.cycle_every_packs);
  cycle_p_threshold_ = hop / (kMinorShare * budget_.arl0_packs);
}

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
  const int slot = Slot(finding.kind);
  open_[slot] = finding.transition == Transition::kRaised;
  if (finding.kind == FindingKind::kOscillation && !open_[slot]) off_head_ = -1;
  if (finding.kind == FindingKind::kSpread && !open_[slot]) spread_scale_ = 1.0;
  if (open_[slot]) {
    raised_at_[slot] = finding.at;
    raised_at_pack_[slot] = packs_;
  }
  if (finding.transition == Transition::kRaised && finding.kind != FindingKind::kSettling &&
      finding.kind != FindingKind::kSilence) {
    block_clean_ = false;  // something happened: this block does not teach the baseline
  }
  out->push_back(std::move(finding));
}

void LineMonitor::Clear(FindingKind kind, const Pack& at, const char* detector,
                        std::vector<Finding>* out) {
  if (!open_[Slot(kind)]) return;
  Finding cleared = Make(Transition::kCleared, kind, Severity::kInfo, at);
  cleared.detector = detector;
  if (kind == FindingKind::kShift || kind == FindingKind::kDrift) cleared.level_g = recent_.Mean();
  Emit(std::move(cleared), out);
}

bool LineMonitor::IsGross(double grams) const {
  if (!(grams > 0.0) || !std::isfinite(grams)) return true;
  double reference = 0.0;
  if (settings_.nominal_g) {
    reference = *settings_.nominal_g;
  } else if (phase_ == Phase::kRunning) {
    reference = baseline_.level();
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
  RunStuck(pack, out);
  if (phase_ == Phase::kSettling) {
    Learn(pack, out);
  } else {
    Run(pack, out);
  }
}

void LineMonitor::Start(const Pack& pack, std::vector<Finding>* out) {
  // A new start holds mean and cycle alarms: close what the old run left open.
  for (FindingKind kind : {FindingKind::kShift, FindingKind::kDrift, FindingKind::kOscillation,
                           FindingKind::kSpread, FindingKind::kStuck, FindingKind::kOutlier}) {
    Clear(kind, pack, "restart", out);
  }
  phase_ = Phase::kSettling;
  learn_values_.clear();
  learn_heads_.clear();
  learn_indexes_.clear();
  learn_target_ = static_cast<std::size_t>(std::max(30, settings_.baseline_packs));
  start_index_ = pack.index;
  settling_alarmed_ = false;
  mean_raise_count_ = 0;
  recent_.Clear();
  stuck_.Reset();
  ring_count_ = 0;
  ring_next_ = 0;
  turn_sum_fixed_ = 0;
  outlier_side_run_ = 0;
  if (!open_[Slot(FindingKind::kSettling)]) {
    Finding raised = Make(Transition::kRaised, FindingKind::kSettling, Severity::kInfo, pack);
    raised.onset = pack.index;
    raised.onset_time_ms = pack.time_ms;
    raised.detector = "settle_fit";
    Emit(std::move(raised), out);
  }
}

void LineMonitor::Learn(const Pack& pack, std::vector<Finding>* out) {
  recent_.Add(pack.grams);
  if (learn_values_.size() < learn_capacity_) {
    learn_values_.push_back(pack.grams);
    learn_heads_.push_back(pack.head);
    learn_indexes_.push_back(pack.index);
  }
  const std::size_t n = learn_values_.size();
  if (!settling_alarmed_ &&
      static_cast<std::int64_t>(n) >= std::max(1, settings_.settling_alarm_packs)) {
    settling_alarmed_ = true;
    Finding alarm = Make(Transition::kRaised, FindingKind::kSettling, Severity::kAlarm, pack);
    alarm.onset = start_index_;
    alarm.level_g = recent_.Mean();
    alarm.detector = "settling_limit";
    Emit(std::move(alarm), out);
  }
  if (n < learn_target_) return;

  const std::size_t min_after =
      static_cast<std::size_t>(std::max(30, std::max(30, settings_.baseline_packs) / 3));
  const SettleEstimate est = EstimateSettling(std::span<const double>(learn_values_), min_after);
  if (!est.settled && n < learn_capacity_) {
    // Not settled yet (or too few settled packs): look again when there may be.
    const std::size_t wanted = std::max(n + 25, est.settle_at + min_after);
    learn_target_ = std::min(learn_capacity_, wanted);
    return;
  }
  const std::size_t settle_at = std::min(est.settle_at, n > min_after ? n - min_after : 0);
  FinishSettling(pack, settle_at, out);
}

void LineMonitor::FinishSettling(const Pack& pack, std::size_t settle_at,
                                 std::vector<Finding>* out) {
  const std::size_t n = learn_values_.size();
  // Heads: from the settings, else learnt from the packs when every pack names one.
  heads_ = settings_.heads;
  if (heads_ <= 0) {
    int max_head = -1;
    bool all = true;
    for (int h : learn_heads_) {
      if (h < 0) all = false;
      max_head = std::max(max_head, h);
    }
    heads_ = all && max_head >= 1 && max_head < kMaxInferredHeads ? max_head + 1 : 0;
  }
  baseline_.Learn(std::span<const double>(learn_values_.data() + settle_at, n - settle_at),
                  std::span<const int>(learn_heads_.data() + settle_at, n - settle_at), heads_);

  inflation_ = baseline_.AutocorrelationInflation();
  ArmDetectors();

  phase_ = Phase::kRunning;
  Finding cleared = Make(Transition::kCleared, FindingKind::kSettling, Severity::kInfo, pack);
  cleared.onset = learn_indexes_.front();
  cleared.end = learn_indexes_[std::min(settle_at, n - 1)];
  cleared.level_g = baseline_.level();
  cleared.detector = "settle_fit";
  Emit(std::move(cleared), out);
  learn_values_.clear();
  learn_heads_.clear();
  learn_indexes_.clear();
}

// Designs that depend on what was learnt (heads_, baseline_, inflation_), with
// every detector at its start. Called at the end of settling and by
// RestoreCheckpoint (line_monitor_checkpoint.cpp), which then puts the saved
// statistics back.
void LineMonitor::ArmDetectors() {
  // The design target is rounded to 5 % of a sigma so that lines whose learnt
  // autocorrelation is nearly the same share one design (each costs milliseconds;
  // 20 lines gave 14 designs at a 1 % grid). Being off by at most 0.025 sigma moves
  // the CUSUM's delay by a fraction of a pack (its optimum in k is flat) and leaves
  // the false-alarm rate exact, since h is solved for whatever k is used.
  const double design_shift =
      std::max(0.05, std::round(20.0 * settings_.min_shift_sigma / inflation_) / 20.0);
  const ShiftCusumDesign mean_design =
      designs_ ? designs_->ShiftCusum(settings_.false_alarms_per_day, settings_.pack_rate_per_min,
                                      design_shift)
               : DesignShiftCusum(settings_.false_alarms_per_day, settings_.pack_rate_per_min,
                                  design_shift);
  cusum_k_ = mean_design.k;
  cusum_h_ = mean_design.h;
  cusum_up_ = TabularCusum(cusum_k_, cusum_h_);
  cusum_down_ = TabularCusum(cusum_k_, cusum_h_);
  cusum_up_.Reset(cusum_h_ / 2.0);  // 50 % head start (fast initial response)
  cusum_down_.Reset(cusum_h_ / 2.0);
  ewma_.Reset();

  if (heads_ >= 2) {
    head_k_ = std::max(0.25, settings_.head_shift_sigma / 2.0);
    head_h_ = CusumDecisionInterval(head_k_, kMinorShare * budget_.arl0_packs);
    head_cusums_ = HeadCusums(heads_, head_k_, head_h_);
    head_relative_scale_ = 1.0 / std::sqrt(1.0 + 1.0 / static_cast<double>(heads_ - 1));
  } else {
    head_cusums_ = HeadCusums(0, 1.0, 6.0);
  }
  subgroup_n_ =
      settings_.subgroup_packs > 0 ? settings_.subgroup_packs : (heads_ >= 2 ? heads_ : 5);
  subgroup_count_ = 0;
  subgroup_sum_ = 0.0;
  RunRuleSettings rs =
      RunRuleSettings::ForInControlArl(kMinorShare * budget_.arl0_packs / subgroup_n_);
  if (settings_.run_one_side_count > 0) rs.one_side_run = settings_.run_one_side_count;
  if (settings_.run_trend_count > 0) rs.trend_run = settings_.run_trend_count;
  if (settings_.run_sawtooth_count > 0) rs.sawtooth_run = settings_.run_sawtooth_count;
  if (settings_.run_hugging_count > 0) rs.hugging_run = settings_.run_hugging_count;
  if (settings_.run_avoiding_count > 0) rs.avoiding_run = settings_.run_avoiding_count;
  if (!settings_.run_rules) std::fill(std::begin(rs.enabled), std::end(rs.enabled), false);
  rules_ = RunRules(rs);

  const int spread_n = heads_ >= 2 ? heads_ : 5;
  {
    const LogVarianceCusum probe(spread_n, 0.0, 1.0);
    const double shift = 2.0 * std::log(std::max(1.01, settings_.spread_ratio)) / probe.LogSd();
    spread_k_ = shift / 2.0;
    // One-sided ARL A is about twice the two-sided one the design function solves for.
    spread_h_ = CusumDecisionInterval(spread_k_, 0.5 * kMinorShare * budget_.arl0_packs / spread_n);
  }
  spread_ = LogVarianceCusum(spread_n, spread_k_, spread_h_,
                             LogVarianceCusum::ExpectedVarianceRatio(spread_n, baseline_.phi()));
  stuck_.set_min_run(
      StuckReading::MinRunFor(stuck_.RepeatRate(), stuck_chance_, settings_.stuck_packs));
  since_cycle_test_ = 0;
  block_count_ = 0;
  block_clean_ = true;
  ring_count_ = ring_next_ = 0;
  turn_sum_fixed_ = 0;
  last_z_ = 0.0;
  UpdateAllowances();
}

void LineMonitor::UpdateAllowances() {
  // Allowances for the baseline's own error, sized so that the false-alarm rate
  // averaged over that error is the designed one (rather than the rate at a one-
  // standard-error worst case, which over-pays once the baseline holds thousands
  // of packs). With ln ARL₀ ≈ 2k·b − ln(2k²), b = h + 1.166 (Siegmund), a level error
  // ε ~ N(0, s²) in a two-sided CUSUM shifts the two sides' rates by e^{±cε},
  // c = ∂ln ARL₀/∂k = 2b − 2/k; their mean grows by E[cosh cε] = e^{c²s²/2}, which
  // an allowance a = c·s²/2 taken off the reference value cancels. A relative scale
  // error ε (σ or the autocorrelation inflation) moves ln ARL₀ by c'·ε with
  // c' = k∂/∂k + h∂/∂h = 2k(h + b) − 2, cancelled by widening the scale by c'·s²/2.
  // Both allowances fall as 1/n as the baseline grows.
  const double b = cusum_h_ + 1.166;
  const double c_level = std::max(0.0, 2.0 * b - 2.0 / cusum_k_);
  const double c_scale = std::max(0.0, 2.0 * cusum_k_ * (cusum_h_ + b) - 2.0);
  const double se_sigma = baseline_.SigmaRelError();
  const double se_inflation = baseline_.InflationRelError();
  sigma_eff_ = baseline_.sigma() * (1.0 + 0.5 * c_scale * se_sigma * se_sigma);
  // The mean detectors' scale follows the autocorrelation as the baseline refines it
  // (their k and h stay as designed at the end of settling).
  mean_scale_ =
      baseline_.AutocorrelationInflation() * (1.0 + 0.5 * c_scale * se_inflation * se_inflation);
  const double se_level = baseline_.LevelStdError() / baseline_.AutocorrelationInflation();
  level_allow_ = 0.5 * c_level * se_level * se_level;
  // The spread CUSUM is far more sensitive to σ̂ than the mean CUSUM: σ̂ low by a
  // share ε moves each standardised ln s² by 2ε/sd(ln s²). Same rule, its own c.
  const double spread_b = spread_h_ + 1.166;
  const double c_spread = std::max(0.0, 2.0 * spread_b - 2.0 / std::max(0.05, spread_k_)) * 2.0 /
                          std::max(1e-6, spread_.LogSd());
  spread_z_factor_ =
      (1.0 + 0.5 * c_scale * se_sigma * se_sigma) / (1.0 + 0.5 * c_spread * se_sigma * se_sigma);
  subgroup_sd_ = std::sqrt(MeanVarianceFactor(subgroup_n_, baseline_.phi()) / subgroup_n_);
  head_allow_.assign(static_cast<std::size_t>(std::max(0, heads_)), 0.0);
  for (int h = 0; h < heads_; ++h) {
    head_allow_[static_cast<std::size_t>(h)] = baseline_.OffsetStdError(h);
  }
}

std::int64_t LineMonitor::FixedZ(double z) {
  // |z| is capped far beyond any alarm so that 2^32·z and a turn's sum stay in range.
  if (!std::isfinite(z)) return 0;
  // Truncation (one instruction) rather than llround (a library call): any fixed
  // rule will do, as long as adding and removing a value use the same one.
  return static_cast<std::int64_t>(std::clamp(z, -1e6, 1e6) * kFixedZScale);
}

void LineMonitor::RebuildTurnSum() {
  turn_sum_fixed_ = 0;
  if (heads_ < 2) return;
  const std::size_t n = std::min(ring_count_, static_cast<std::size_t>(heads_));
  for (std::size_t i = 0; i < n; ++i) turn_sum_fixed_ += FixedZ(Recent(i).z);
}

const LineMonitor::Entry& LineMonitor::Recent(std::size_t back) const {
  // The ring's size is the periodogram window, a power of two: a mask, not a division.
  const std::size_t cap = ring_.size();
  return ring_[(ring_next_ + cap - 1 - back) & (cap - 1)];
}

double LineMonitor::PacksPerHour() const {
  if (ring_count_ < 2) return settings_.pack_rate_per_min * 60.0;
  const Entry& newest = Recent(0);
  const Entry& oldest = Recent(ring_count_ - 1);
  const double span_ms = static_cast<double>(newest.time_ms - oldest.time_ms);
  if (!(span_ms > 0.0)) return settings_.pack_rate_per_min * 60.0;
  return static_cast<double>(ring_count_ - 1) * 3.6e6 / span_ms;
}

void LineMonitor::Run(const Pack& pack, std::vector<Finding>* out) {
  recent_.Add(pack.grams);
  double z = baseline_.Residual(pack.grams, pack.head) / sigma_eff_;
  bool outlier = false;
  // While a mean change is open, wild packs are judged from the level it moved to.
  const bool mean_open = open_[Slot(FindingKind::kShift)] || open_[Slot(FindingKind::kDrift)];
  const double centre = mean_open ? mean_clear_ewma_ : 0.0;
  if (std::fabs(z - centre) > budget_.individuals_limit) {
    NoteOutlier(pack, "individuals_limit", out);
    const int side = z > centre ? 1 : -1;
    outlier_side_run_ = (outlier_side_run_ * side > 0) ? outlier_side_run_ + side : side;
    // An isolated wild pack says nothing about the process mean; a second one in a row
    // on the same side may be a large step, so it goes in, clipped to the limit.
    if (std::abs(outlier_side_run_) < 2) {
      RefreshBaseline(pack, false);
      return;
    }
    z = std::clamp(z, centre - budget_.individuals_limit, centre + budget_.individuals_limit);
    outlier = true;
  } else {
    outlier_side_run_ = 0;
    MaybeCloseOutlierBurst(pack, out);
  }
  if (open_[Slot(FindingKind::kStuck)]) {  // a frozen reading is not a weight
    RefreshBaseline(pack, false);
    return;
  }
  Entry& e = ring_[ring_next_];
  e.z = z;
  e.white = z - baseline_.phi() * last_z_;
  ring_white_[ring_next_] = e.white;
  e.index = pack.index;
  e.time_ms = pack.time_ms;
  e.head = pack.head;
  ring_next_ = (ring_next_ + 1) & (ring_.size() - 1);
  ring_count_ = std::min(ring_count_ + 1, ring_.size());
  last_z_ = z;
  if (heads_ >= 2) {  // keep the last turn's sum for RunHeads
    const auto turn = static_cast<std::size_t>(heads_);
    turn_sum_fixed_ += FixedZ(z);
    if (ring_count_ > turn) turn_sum_fixed_ -= FixedZ(Recent(turn).z);
  }

  const double z_mean = z / spread_scale_;
  RunMean(pack, z_mean, out);
  RunHeads(pack, z_mean, out);
  RunSubgroup(pack, z_mean, out);
  RunSpread(pack,
            spread_z_factor_ * (pack.head == off_head_ && off_head_ >= 0 ? z - off_head_shift_ : z),
            out);
  RunCycles(pack, out);
  RefreshBaseline(pack, !outlier);
}

void LineMonitor::RunMean(const Pack& pack, double z, std::vector<Finding>* out) {
  const bool open = open_[Slot(FindingKind::kShift)] || open_[Slot(FindingKind::kDrift)];
  if (open) {
    const FindingKind kind =
        open_[Slot(FindingKind::kShift)] ? FindingKind::kShift : FindingKind::kDrift;
    mean_clear_ewma_ += kMeanClearEwmaLambda * (z - mean_clear_ewma_);
    const std::int64_t open_for = packs_ - raised_at_pack_[Slot(kind)];
    if (kind == FindingKind::kShift && !mean_open_refit_done_ && open_for > 0 &&
        open_for <= kRefitHorizonPacks && open_for % kRefitEveryPacks == 0 &&
        MaybeReclassifyAsDrift(pack, out)) {
      return;
    }
    if (packs_ - raised_at_pack_[Slot(kind)] >= kMeanMinOpenPacks &&
        std::fabs(mean_clear_ewma_) < kMeanClearFraction * cusum_k_ * mean_scale_) {
      Clear(kind, pack, kind == FindingKind::kShift ? "cusum" : "ewma", out);
      cusum_up_.Reset(cusum_h_ / 2.0);
      cusum_down_.Reset(cusum_h_ / 2.0);
      ewma_.Reset();
    }
    return;
  }
  const double zc = z / mean_scale_;
  cusum_up_.UpdateUpper(zc - level_allow_, pack.index);
  cusum_down_.UpdateLower(zc + level_allow_, pack.index);
  const EwmaChart::Signal ew = ewma_.Update(zc, level_allow_);
  if (cusum_up_.upper() > cusum_h_) {
    RaiseMean(pack, "cusum", +1,
              (cusum_up_.EstimatedShift(TabularCusum::Signal::kUp) + level_allow_) * mean_scale_,
              cusum_up_.upper_onset(), out);
  } else if (cusum_down_.lower() > cusum_h_) {
    RaiseMean(
        pack, "cusum", -1,
        (cusum_down_.EstimatedShift(TabularCusum::Signal::kDown) - level_allow_) * mean_scale_,
        cusum_down_.lower_onset(), out);
  } else if (ew != EwmaChart::Signal::kNone) {
    const bool up = ew == EwmaChart::Signal::kUp;
    std::optional<std::int64_t> onset;
    if (up && cusum_up_.upper() > 0.0) onset = cusum_up_.upper_onset();
    if (!up && cusum_down_.lower() > 0.0) onset = cusum_down_.lower_onset();
    RaiseMean(pack, "ewma", up ? 1 : -1, ewma_.value() * mean_scale_, onset, out);
  }
}

void LineMonitor::RaiseMean(const Pack& pack, const char* detector, int side, double cusum_shift,
                            std::optional<std::int64_t> cusum_onset, std::vector<Finding>* out) {
  // While the line swings, its level changes are the swing: the open oscillation
  // finding already speaks for them, so no string of shift alarms follows it.
  if (open_[Slot(FindingKind::kOscillation)]) {
    cusum_up_.Reset(0.0);
    cusum_down_.Reset(0.0);
    ewma_.Reset();
    return;
  }
  if (NoteMeanRaise(pack, side, cusum_shift, out)) {
    cusum_up_.Reset(0.0);
    cusum_down_.Reset(0.0);
    ewma_.Reset();
    return;
  }
  // The window for the shape fit: from a little before the estimated onset to now.
  std::size_t back = std::min<std::size_t>(
      ring_count_, 2 * static_cast<std::size_t>(3.0 / settings_.drift_lambda));
  if (cusum_onset) {
    std::size_t since = 0;
    while (since < ring_count_ && Recent(since).index >= *cusum_onset) ++since;
    back = std::min(ring_count_, std::max<std::size_t>(since + kShapePrePacks, 3 * since));
  }
  back = std::max<std::size_t>(std::min<std::size_t>(back, ring_count_), 1);
  scratch_.clear();
  for (std::size_t i = back; i-- > 0;) scratch_.push_back(Recent(i).z);
  const ChangeShape shape = FitChangeShape(scratch_, kRampMargin, kMinRampPacks);
  const double z_to_sigma = sigma_eff_ / baseline_.sigma();
  const bool ramp = shape.ramp && shape.slope * side > 0.0;
  const FindingKind kind = ramp ? FindingKind::kDrift : FindingKind::kShift;

  double size_sigma = 0.0;
  Finding raised = Make(Transition::kRaised, kind, Severity::kWarning, pack);
  if (ramp) {
    const double packs = static_cast<double>(back - shape.ramp_at);
    size_sigma = shape.slope * packs * z_to_sigma;
    raised.onset = Recent(back - 1 - shape.ramp_at).index;
    raised.onset_time_ms = Recent(back - 1 - shape.ramp_at).time_ms;
    raised.slope_g_per_h = shape.slope * sigma_eff_ * PacksPerHour();
  } else {
    size_sigma = std::string_view(detector) == "cusum" ? cusum_shift : shape.step_size * z_to_sigma;
    if (std::string_view(detector) != "cusum" && size_sigma * side <= 0.0) size_sigma = cusum_shift;
    if (cusum_onset && std::string_view(detector) == "cusum") {
      raised.onset = *cusum_onset;
    } else {
      raised.onset = Recent(back - 1 - shape.step_at).index;
    }
  }
  raised.severity =
      std::fabs(size_sigma) >= kShiftAlarmSigma ? Severity::kAlarm : Severity::kWarning;
  raised.size_sigma = size_sigma;
  raised.size_g = size_sigma * baseline_.sigma();
  raised.level_g = baseline_.level() + size_sigma * baseline_.sigma();
  raised.detector = std::string(detector) + (ramp ? "+ramp_fit" : "+step_fit");
  mean_open_side_ = side;
  mean_open_onset_ = raised.onset.value_or(pack.index);
  mean_open_refit_done_ = ramp;
  Emit(std::move(raised), out);
  mean_clear_ewma_ = size_sigma;
  cusum_up_.Reset(0.0);
  cusum_down_.Reset(0.0);
  ewma_.Reset();
}

bool LineMonitor::MaybeReclassifyAsDrift(const Pack& pack, std::vector<Finding>* out) {
  std::size_t since = 0;
  while (since < ring_count_ && Recent(since).index >= mean_open_onset_) ++since;
  const std::size_t back = std::min(ring_count_, since + kShapePrePacks);
  if (back < 2 * kMinRampPacks) return false;
  scratch_.clear();
  for (std::size_t i = back; i-- > 0;) scratch_.push_back(Recent(i).z);
  const ChangeShape shape = FitChangeShape(scratch_, kRefitMargin, kMinRampPacks);
  if (!shape.ramp || shape.slope * mean_open_side_ <= 0.0) return false;
  mean_open_refit_done_ = true;
  Clear(FindingKind::kShift, pack, "refit_as_ramp", out);
  const double z_to_sigma = sigma_eff_ / baseline_.sigma();
  const double size_sigma = shape.slope * static_cast<double>(back - shape.ramp_at) * z_to_sigma;
  Finding raised =
      Make(Transition::kRaised, FindingKind::kDrift,
           std::fabs(size_sigma) >= kShiftAlarmSigma ? Severity::kAlarm : Severity::kWarning, pack);
  raised.onset = Recent(back - 1 - shape.ramp_at).index;
  raised.onset_time_ms = Recent(back - 1 - shape.ramp_at).time_ms;
  raised.slope_g_per_h = shape.slope * sigma_eff_ * PacksPerHour();
  raised.size_sigma = size_sigma;
  raised.size_g = size_sigma * baseline_.sigma();
  raised.level_g = baseline_.level() + size_sigma * baseline_.sigma();
  raised.detector = "ramp_refit";
  mean_open_onset_ = *raised.onset;
  Emit(std::move(raised), out);
  return true;
}

bool LineMonitor::NoteMeanRaise(const Pack& pack, int side, double size_sigma,
                                std::vector<Finding>* out) {
  if (mean_raise_count_ == static_cast<int>(mean_raises_.size())) {
    std::rotate(mean_raises_.begin(), mean_raises_.begin() + 1, mean_raises_.end());
    --mean_raise_count_;
  }
  const double level = (recent_.Mean() - baseline_.level()) / baseline_.sigma();
  mean_raises_[static_cast<std::size_t>(mean_raise_count_++)] = {packs_, side, pack.index, level};
  if (mean_raise_count_ < kSwingRaises) return false;
  const MeanRaise* last = &mean_raises_[static_cast<std::size_t>(mean_raise_count_ - kSwingRaises)];
  bool alternating = true, same_side = true;
  for (int i = 1; i < kSwingRaises; ++i) {
    alternating &= last[i].side != last[i - 1].side;
    same_side &= last[i].side == last[i - 1].side;
  }
  const std::int64_t span = last[kSwingRaises - 1].pack - last[0].pack;
  const double growth = side * (last[kSwingRaises - 1].level - last[0].level);
  if (same_side && span <= kCreepSpanPacks && growth > kCreepGrowthSigma) {
    // The level keeps leaving in the same direction, further each time, and the
    // shift keeps closing because each step is small: that is a slow drift.
    Finding raised = Make(
        Transition::kRaised, FindingKind::kDrift,
        std::fabs(size_sigma) >= kShiftAlarmSigma ? Severity::kAlarm : Severity::kWarning, pack);
    raised.onset = last[0].index;
    raised.size_sigma = size_sigma;
    raised.size_g = size_sigma * baseline_.sigma();
    raised.level_g = baseline_.level() + *raised.size_g;
    raised.slope_g_per_h =
        *raised.size_g / std::max<double>(1.0, static_cast<double>(span)) * PacksPerHour();
    raised.detector = "repeated_shifts";
    mean_open_side_ = side;
    mean_open_onset_ = last[0].index;
    mean_open_refit_done_ = true;
    mean_clear_ewma_ = size_sigma;
    Emit(std::move(raised), out);
    mean_raise_count_ = 0;
    return true;
  }
  if (!alternating || span > kSwingSpanPacks) return false;
  // Each reversal is half a cycle.
  const double period = 2.0 * static_cast<double>(span) / (kSwingRaises - 1);
  Finding raised = Make(Transition::kRaised, FindingKind::kOscillation, Severity::kWarning, pack);
  raised.onset = raised_at_[Slot(FindingKind::kShift)];
  raised.period_packs = period;
  raised.period_s = period * 3600.0 / PacksPerHour();
  raised.size_sigma = std::fabs(size_sigma);
  raised.size_g = std::fabs(size_sigma) * baseline_.sigma();
  raised.detector = "level_reversals";
  Emit(std::move(raised), out);
  mean_raise_count_ = 0;
  return true;
}

void LineMonitor::RunHeads(const Pack& pack, double z, std::vector<Finding>* out) {
  if (head_cusums_.heads() < 2 || pack.head < 0 || pack.head >= head_cusums_.heads()) return;
  const double allowance = head_allow_[static_cast<std::size_t>(pack.head)];
  // Judge the head against the other heads of the last turn, not against the
  // baseline: when the whole line drifts or steps, no single head is at fault.
  const auto others = static_cast<std::size_t>(head_cusums_.heads() - 1);
  if (ring_count_ <= others) return;
  const double others_sum =
      static_cast<double>(turn_sum_fixed_ - FixedZ(Recent(0).z)) / kFixedZScale;
  const double relative = (z - others_sum / static_cast<double>(others)) * head_relative_scale_;
  const std::optional<HeadSignal> s =
      head_cusums_.Update(pack.head, relative, pack.index, allowance);
  if (!s || open_[Slot(FindingKind::kOscillation)]) return;
  Finding raised = Make(
      Transition::kRaised, FindingKind::kOscillation,
      std::fabs(s->shift) >= 2.0 * kShiftAlarmSigma ? Severity::kAlarm : Severity::kWarning, pack);
  raised.onset = s->onset;
  raised.head = s->head;
  raised.period_packs = static_cast<double>(HeadPatternPeriod(s->onset));
  raised.period_s = static_cast<double>(heads_) * 3600.0 / PacksPerHour();
  raised.size_sigma = s->shift * sigma_eff_ / baseline_.sigma();
  raised.size_g = *raised.size_sigma * baseline_.sigma();
  raised.level_g = baseline_.level() + baseline_.offset(s->head) + *raised.size_g;
  raised.detector = "head_cusum";
  off_head_ = s->head;
  off_head_shift_ = s->shift;
  Emit(std::move(raised), out);
}

int LineMonitor::HeadPatternPeriod(std::int64_t onset) const {
  // Per-head sums since the estimated onset (at least six turns, within the recent
  // window): packs from before the change only blur the pattern, and fewer turns
  // leave it to the noise.
  const int heads = std::min(heads_, kMaxInferredHeads);
  std::array<double, kMaxInferredHeads> count{}, sum{};
  const std::size_t min_packs = std::min(ring_count_, 6 * static_cast<std::size_t>(heads));
  for (std::size_t i = 0; i < ring_count_; ++i) {
    const Entry& e = Recent(i);
    if (i >= min_packs && e.index < onset) break;
    if (e.head >= 0 && e.head < heads) {
      const auto u = static_cast<std::size_t>(e.head);
      count[u] += 1.0;
      sum[u] += e.z;
    }
  }
  const auto n = static_cast<std::size_t>(std::max(0, heads));
  return heft::HeadPatternPeriod(
      {std::span<const double>(count.data(), n), std::span<const double>(sum.data(), n)});
}

void LineMonitor::RunSubgroup(const Pack& pack, double z, std::vector<Finding>* out) {
  subgroup_sum_ += z;
  if (++subgroup_count_ < subgroup_n_) return;
  const double mean_z = subgroup_sum_ / subgroup_n_ / subgroup_sd_;
  subgroup_sum_ = 0.0;
  subgroup_count_ = 0;
  const double slack = baseline_.LevelStdError() / subgroup_sd_;
  const std::optional<RunRuleId> rule = rules_.Update(mean_z, slack);
  if (!rule) return;
  const FindingKind kind = RunRuleKind(*rule);
  const std::string detector = "run_rule:" + std::string(RunRuleName(*rule));
  if (kind == FindingKind::kShift || kind == FindingKind::kDrift) {
    if (open_[Slot(FindingKind::kShift)] || open_[Slot(FindingKind::kDrift)]) return;
    RaiseMean(pack, detector.c_str(), mean_z > 0 ? 1 : -1, mean_z * subgroup_sd_, std::nullopt,
              out);
    return;
  }
  if (open_[Slot(kind)]) return;
  Finding raised = Make(Transition::kRaised, kind, Severity::kWarning, pack);
  raised.onset = pack.index;
  raised.detector = detector;
  if (kind == FindingKind::kOscillation && ring_count_ == ring_.size()) {
    // Say how long the cycle is, if the periodogram can tell.
    FillCycleBuffer();
    const PeriodicityResult r = cycles_.Evaluate(cycle_buffer_);
    if (r.p_value < 1e-3) {
      raised.period_packs = r.period;
      raised.period_s = r.period * 3600.0 / PacksPerHour();
    }
  }
  Emit(std::move(raised), out);
}

void LineMonitor::RunSpread(const Pack& pack, double z, std::vector<Finding>* out) {
  const bool signal = spread_.Add(z);
  const int slot = Slot(FindingKind::kSpread);
  if (open_[slot]) {
    if (packs_ - raised_at_pack_[slot] >= 20 * spread_.subgroup() &&
        spread_.smoothed() < spread_k_) {
      Clear(FindingKind::kSpread, pack, "log_variance_cusum", out);
      spread_.Reset();
    }
    return;
  }
  if (!signal) return;
  Finding raised = Make(Transition::kRaised, FindingKind::kSpread, Severity::kWarning, pack);
  raised.onset = pack.index;
  // Size: the latest subgroups' sigma ratio, as the sigma now minus the baseline's.
  const double ratio = std::exp(0.5 * spread_.smoothed() * spread_.LogSd());
  raised.size_g = (ratio - 1.0) * baseline_.sigma();
  raised.size_sigma = ratio - 1.0;
  raised.detector = "log_variance_cusum";
  Emit(std::move(raised), out);
  spread_scale_ = std::max(1.0, ratio);
  spread_.Reset();
}

void LineMonitor::FillCycleBuffer() {
  // Oldest first: the full ring from the next write slot round to the newest.
  const std::size_t n = ring_white_.size();
  const auto older = static_cast<std::ptrdiff_t>(ring_next_);
  std::copy(ring_white_.begin() + older, ring_white_.end(), cycle_buffer_.begin());
  std::copy(ring_white_.begin(), ring_white_.begin() + older,
            cycle_buffer_.begin() + static_cast<std::ptrdiff_t>(n - ring_next_));
}

void LineMonitor::RunCycles(const Pack& pack, std::vector<Finding>* out) {
  if (++since_cycle_test_ < std::max(1, settings_.cycle_every_packs)) return;
  if (ring_count_ < ring_.size()) return;
  since_cycle_test_ = 0;
  const std::size_t n = ring_.size();
  FillCycleBuffer();
  const PeriodicityResult r = cycles_.Evaluate(cycle_buffer_);
  const int slot = Slot(FindingKind::kOscillation);
  // Amplitude back in z units: whitening scaled the cycle by |1 − φe^{−iω}|.
  const double w = 2.0 * std::numbers::pi / std::max(2.0, r.period);
  const double phi = baseline_.phi();
  const double gain = std::sqrt(std::max(1e-6, 1.0 - 2.0 * phi * std::cos(w) + phi * phi));
  const double amplitude = r.amplitude / gain;
  if (open_[slot]) {
    if (packs_ - raised_at_pack_[slot] >= static_cast<std::int64_t>(n) && r.p_value > 1e-2) {
      bool heads_quiet = true;
      for (int h = 0; h < head_cusums_.heads(); ++h) {
        if (head_cusums_.upper(h) > head_h_ / 2.0 || head_cusums_.lower(h) > head_h_ / 2.0) {
          heads_quiet = false;
        }
      }
      if (heads_quiet) Clear(FindingKind::kOscillation, pack, "periodogram", out);
    }
    return;
  }
  if (r.p_value > cycle_p_threshold_ || amplitude < settings_.min_cycle_sigma) return;
  Finding raised = Make(Transition::kRaised, FindingKind::kOscillation, Severity::kWarning, pack);
  raised.period_packs = r.period;
  raised.period_s = r.period * 3600.0 / PacksPerHour();
  raised.onset = Recent(n - 1).index;
  raised.size_sigma = amplitude * sigma_eff_ / baseline_.sigma();
  raised.size_g = *raised.size_sigma * baseline_.sigma();
  raised.detector = "periodogram";
  // A period that divides the head count is a head pattern: name the head that
  // deviates most over the window.
  if (heads_ >= 2) {
    const double turns = heads_ / r.period;
    if (std::fabs(turns - std::round(turns)) < 0.1 * std::max(1.0, std::round(turns)) &&
        std::round(turns) >= 1.0) {
      std::array<double, kMaxInferredHeads> sum{};
      std::array<int, kMaxInferredHeads> count{};
      for (std::size_t i = 0; i < n; ++i) {
        const Entry& e = Recent(i);
        if (e.head >= 0 && e.head < heads_ && e.head < kMaxInferredHeads) {
          sum[static_cast<std::size_t>(e.head)] += e.z;
          ++count[static_cast<std::size_t>(e.head)];
        }
      }
      int worst = -1;
      double worst_mean = 0.0;
      for (int h = 0; h < std::min(heads_, kMaxInferredHeads); ++h) {
        if (count[static_cast<std::size_t>(h)] == 0) continue;
        const double m = sum[static_cast<std::size_t>(h)] / count[static_cast<std::size_t>(h)];
        if (worst < 0 || std::fabs(m) > std::fabs(worst_mean)) {
          worst = h;
          worst_mean = m;
        }
      }
      if (worst >= 0) {
        raised.head = worst;
        raised.size_sigma = worst_mean * sigma_eff_ / baseline_.sigma();
        raised.size_g = *raised.size_sigma * baseline_.sigma();
      }
    }
  }
  Emit(std::move(raised), out);
}

void LineMonitor::RunStuck(const Pack& pack, std::vector<Finding>* out) {
  const StuckReading::Event e = stuck_.Update(pack.grams);
  if (stuck_.run() == 1) stuck_start_index_ = pack.index;
  if (e == StuckReading::Event::kStuck && !open_[Slot(FindingKind::kStuck)]) {
    Finding raised = Make(Transition::kRaised, FindingKind::kStuck, Severity::kAlarm, pack);
    raised.onset = stuck_start_index_;
    raised.level_g = pack.grams;
    raised.detector = "stuck_reading";
    Emit(std::move(raised), out);
  } else if (e == StuckReading::Event::kReleased && open_[Slot(FindingKind::kStuck)]) {
    Finding cleared = Make(Transition::kCleared, FindingKind::kStuck, Severity::kInfo, pack);
    cleared.onset = stuck_start_index_;
    cleared.end = pack.index;  // the first reading that moved
    cleared.detector = "stuck_reading";
    Emit(std::move(cleared), out);
    stuck_start_index_ = pack.index;
  }
}

void LineMonitor::RefreshBaseline(const Pack& pack, bool clean) {
  bool any_open = false;
  for (FindingKind kind : {FindingKind::kShift, FindingKind::kDrift, FindingKind::kOscillation,
                           FindingKind::kSpread, FindingKind::kStuck}) {
    any_open = any_open || open_[Slot(kind)];
  }
  if (any_open) block_clean_ = false;
  if (clean && block_clean_) baseline_.Accumulate(pack.grams, pack.head);
  if (++block_count_ < std::max(50, settings_.baseline_block_packs)) return;
  // Take the block in only if nothing happened and the mean detectors are quiet.
  const bool quiet = cusum_up_.upper() < cusum_h_ / 2.0 && cusum_down_.lower() < cusum_h_ / 2.0 &&
                     std::fabs(ewma_.value()) < ewma_.HalfWidth() / 2.0;
  if (block_clean_ && quiet) {
    baseline_.CommitBlock();
    UpdateAllowances();
  } else {
    baseline_.DiscardBlock();
  }
  block_count_ = 0;
  block_clean_ = true;
}

void LineMonitor::NoteOutlier(const Pack& pack, const char* detector, std::vector<Finding>* out) {
  outlier_last_index_ = pack.index;
  outlier_last_pack_ = packs_;
  block_clean_ = false;
  if (open_[Slot(FindingKind::kOutlier)]) {
    if (++outlier_count_ == std::max(2, settings_.outlier_burst_packs)) {
      // Escalation: a burst of wild packs is a process problem, not chance.
      Finding alarm = Make(Transition::kRaised, FindingKind::kOutlier, Severity::kAlarm, pack);
      alarm.onset = raised_at_[Slot(FindingKind::kOutlier)];
      alarm.size_g = static_cast<double>(outlier_count_);  // packs in the burst so far
      alarm.detector = "outlier_burst";
      Emit(std::move(alarm), out);
    }
    return;
  }
  outlier_count_ = 1;
  Finding raised = Make(Transition::kRaised, FindingKind::kOutlier, Severity::kWarning, pack);
  raised.onset = pack.index;
  raised.onset_time_ms = pack.time_ms;
  raised.level_g = pack.grams;
  if (phase_ == Phase::kRunning) {
    raised.size_g = pack.grams - baseline_.level();
    raised.size_sigma = (pack.grams - baseline_.level()) / baseline_.sigma();
  }
  raised.detector = detector;
  Emit(std::move(raised), out);
}

void LineMonitor::MaybeCloseOutlierBurst(const Pack& pack, std::vector<Finding>* out) {
  if (!open_[Slot(FindingKind::kOutlier)]) return;
  if (packs_ - outlier_last_pack_ < kOutlierQuietPacks) return;
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
  s.baseline_level_g = baseline_.level();
  s.baseline_sigma_g = baseline_.sigma();
  s.open_findings = static_cast<int>(std::count(std::begin(open_), std::end(open_), true));
  return s;
}

}  // namespace heft
