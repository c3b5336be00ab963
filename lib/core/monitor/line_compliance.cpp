// line_compliance.cpp — lots, live risk and compliance findings for one line.
#include "core/monitor/line_compliance.h"

#include <algorithm>
#include <cmath>
#include <utility>

#include "core/comply/compliance_risk.h"
#include "core/comply/safe_target.h"
#include "core/record/native_record.h"

namespace heft {

namespace {
constexpr std::int64_t kMinuteMs = 60'000;
constexpr std::int64_t kHourMs = 60 * kMinuteMs;
constexpr std::int64_t kDayMs = 24 * kHourMs;
// The observed pack rate is trusted once the lot spans this long and this many packs.
constexpr std::int64_t kRateMinSpanMs = kMinuteMs;
constexpr std::int64_t kRateMinPacks = 30;

std::int64_t FloorMod(std::int64_t a, std::int64_t b) {
  const std::int64_t r = a % b;
  return r < 0 ? r + b : r;
}

int SeverityRank(std::optional<Severity> severity) {
  if (!severity) return 0;
  return *severity == Severity::kAlarm ? 2 : (*severity == Severity::kWarning ? 1 : 0);
}

std::uint32_t Bit(comply::ComplianceReason reason) { return 1u << static_cast<unsigned>(reason); }
}  // namespace

bool IsGrossPack(double grams, double nominal_g, double low_ratio, double high_ratio) {
  if (!(grams > 0.0) || !std::isfinite(grams)) return true;
  return grams < low_ratio * nominal_g || grams > high_ratio * nominal_g;
}

Status LineCompliance::Create(std::string line, const LineSettings& settings,
                              std::shared_ptr<const comply::RuleTable> table,
                              std::unique_ptr<LineCompliance>* out) {
  out->reset();
  if (!settings.nominal_g) return Status::Error(line + ": no nominal quantity");
  if (table == nullptr) return Status::Error(line + ": no rule table");
  if (Status s = comply::ValidateLotPolicy(settings.lots); !s.ok()) {
    return Status::Error(line + ": " + s.message());
  }
  comply::NetContentLimits limits;
  if (Status s = comply::ComputeLimits(*table, *settings.nominal_g,
                                       settings.rules_allow_unconfirmed, &limits);
      !s.ok()) {
    return Status::Error(line + ": " + s.message());
  }
  out->reset(new LineCompliance(std::move(line), settings, std::move(table), limits));
  return Status::Ok();
}

LineCompliance::LineCompliance(std::string line, const LineSettings& settings,
                               std::shared_ptr<const comply::RuleTable> table,
                               const comply::NetContentLimits& limits)
    : line_(std::move(line)),
      settings_(settings),
      table_(std::move(table)),
      limits_(limits),
      clock_(settings.lots),
      lot_(limits, comply::LotSettings{settings.cost_per_kg, settings.rejects_in_lot}) {
  if (const comply::PackerRule* rule =
          comply::FindRule(*table_, comply::PackerRuleKind::kT1FractionAtMost);
      rule != nullptr && (rule->provenance.confirmed || settings_.rules_allow_unconfirmed)) {
    t1_share_limit_ = rule->limit_fraction;
  }
}

comply::PackRole LineCompliance::RoleOf(const Pack& pack) const {
  if (pack.status == PackStatus::kError) return comply::PackRole::kError;
  if (IsGrossPack(pack.grams, limits_.nominal_g, settings_.gross_low_ratio,
                  settings_.gross_high_ratio)) {
    return comply::PackRole::kGross;
  }
  return pack.status == PackStatus::kRejected ? comply::PackRole::kRejected
                                              : comply::PackRole::kInLot;
}

void LineCompliance::Push(const Pack& pack, std::vector<Finding>* out,
                          std::vector<LotReport>* closed) {
  if (clock_.StartsNewLot(pack.time_ms, lot_seen_)) {
    if (lot_open_) FinishLot(false, closed);
    ++seq_;
    lot_open_ = true;
    lot_opened_ms_ = clock_.PeriodStartMs(pack.time_ms);
    since_assess_ = kAssessEveryPacks;  // assess the new lot's first pack
  }
  const comply::PackRole role = RoleOf(pack);
  lot_.Add(pack.grams, role, pack.time_ms, pack.index);
  ++lot_seen_;
  const bool counted = role == comply::PackRole::kInLot ||
                       (role == comply::PackRole::kRejected && settings_.rejects_in_lot);
  if (counted && std::isfinite(pack.grams)) {
    if (level_count_ == kLevelWindowPacks) {
      level_sum_ -= level_ring_[level_next_];
    } else {
      ++level_count_;
    }
    level_ring_[level_next_] = pack.grams;
    level_sum_ += pack.grams;
    level_next_ = (level_next_ + 1) % kLevelWindowPacks;
  }
  // A T2 pack is assessed at once; otherwise every few packs.
  const bool new_t2 = limits_.t2_g && counted && pack.grams < *limits_.t2_g;
  if (new_t2 || ++since_assess_ >= kAssessEveryPacks) {
    since_assess_ = 0;
    Assess(pack, out);
  }
}

std::int64_t LineCompliance::PeriodEndMs(std::int64_t period_start_ms) const {
  const comply::LotPolicy& policy = settings_.lots;
  if (policy.boundary == comply::LotBoundary::kHour) return period_start_ms + kHourMs;
  if (policy.boundary != comply::LotBoundary::kShifts || policy.shift_start_minutes.empty()) {
    return period_start_ms + kHourMs;
  }
  const std::int64_t offset_ms = static_cast<std::int64_t>(policy.utc_offset_minutes) * kMinuteMs;
  const int minute = static_cast<int>(FloorMod(period_start_ms + offset_ms, kDayMs) / kMinuteMs);
  const auto& starts = policy.shift_start_minutes;
  auto it = std::upper_bound(starts.begin(), starts.end(), minute);
  const int next = it == starts.end() ? starts.front() + 24 * 60 : *it;
  return period_start_ms + static_cast<std::int64_t>(next - minute) * kMinuteMs;
}

double LineCompliance::PacksPerHour(const comply::LotFigures& figures) const {
  const std::int64_t span = figures.last_time_ms - figures.first_time_ms;
  if (figures.seen >= kRateMinPacks && span >= kRateMinSpanMs) {
    return static_cast<double>(figures.seen - 1) * static_cast<double>(kHourMs) /
           static_cast<double>(span);
  }
  return settings_.pack_rate_per_min * 60.0;
}

std::int64_t LineCompliance::ExpectedLotPacks(const comply::LotFigures& figures) const {
  const comply::LotPolicy& policy = settings_.lots;
  if (policy.boundary == comply::LotBoundary::kCount) {
    return std::max(policy.packs_per_lot, figures.count);
  }
  // Time lots run to the end of their hour or shift; manual lots are assumed
  // to run one more hour (they may close at any time).
  const std::int64_t end_ms = policy.boundary == comply::LotBoundary::kManual
                                  ? figures.last_time_ms + kHourMs
                                  : PeriodEndMs(lot_opened_ms_);
  const double hours =
      static_cast<double>(std::max<std::int64_t>(0, end_ms - figures.last_time_ms)) /
      static_cast<double>(kHourMs);
  // Only in-lot packs count towards the lot size: scale the rate by their share.
  const double share = figures.seen > 0
                           ? static_cast<double>(figures.count) / static_cast<double>(figures.seen)
                           : 1.0;
  const double remaining = std::floor(PacksPerHour(figures) * hours * share);
  return figures.count + static_cast<std::int64_t>(std::min(remaining, 1e9));
}

Finding LineCompliance::Make(Transition transition, Severity severity, const Pack& at,
                             const comply::LotFigures& figures) const {
  Finding f;
  f.transition = transition;
  f.kind = FindingKind::kCompliance;
  f.severity = severity;
  f.line = line_;
  f.at = at.index;
  f.at_time_ms = at.time_ms;
  f.onset = figures.first_index;
  f.onset_time_ms = figures.first_time_ms;
  if (figures.count > 0) {
    f.level_g = figures.mean_g;
    f.size_g = figures.mean_g - limits_.nominal_g;
  }
  return f;
}

void LineCompliance::Assess(const Pack& pack, std::vector<Finding>* out) {
  const comply::LotFigures figures = lot_.Figures();
  comply::ComplianceRisk risk;
  if (figures.count >= 2) {
    comply::RiskInput input = comply::RiskInputFromLot(figures, ExpectedLotPacks(figures));
    if (level_count_ == kLevelWindowPacks) {
      input.current_level_g = level_sum_ / static_cast<double>(kLevelWindowPacks);
      input.current_level_packs = kLevelWindowPacks;
    }
    if (!comply::EstimateRisk(limits_, t1_share_limit_, input, &risk).ok()) {
      risk = comply::ComplianceRisk{};
    }
  }
  const comply::ComplianceAlert alert =
      comply::AssessCompliance(figures, risk, t1_share_limit_, settings_.compliance);

  const int now = SeverityRank(alert.level);
  const int open = SeverityRank(raised_);
  // New reasons at or above the open level (a second alarm reason is news).
  std::uint32_t fresh = 0;
  for (const auto& item : alert.reasons) {
    if (SeverityRank(item.severity) >= std::max(open, 1) && !(announced_ & Bit(item.reason))) {
      fresh |= Bit(item.reason);
    }
  }
  if (now > open || (now == open && now > 0 && fresh != 0)) {
    Finding f = Make(Transition::kRaised, *alert.level, pack, figures);
    // The detector names the most severe fresh reason.
    for (const auto& item : alert.reasons) {
      if (fresh & Bit(item.reason)) {
        f.detector = std::string(comply::ComplianceReasonName(item.reason));
        break;
      }
    }
    if (f.detector.empty()) {
      f.detector = std::string(comply::ComplianceReasonName(alert.reasons.front().reason));
    }
    raised_ = alert.level;
    for (const auto& item : alert.reasons) announced_ |= Bit(item.reason);
    low_since_.reset();
    out->push_back(std::move(f));
    return;
  }
  if (now >= open || !raised_) {
    low_since_.reset();
    return;
  }
  // Lower than what is open: clear once nothing has been reported for the hold-off.
  if (now > 0) {
    low_since_.reset();
    return;
  }
  // Record indexes restart at 0 on a reconnect or a restart: the hold-off then counts
  // from the first record of the new numbering instead of waiting for the old index.
  if (!low_since_ || pack.index < *low_since_) low_since_ = pack.index;
  // At least the alert's start-up wait plus one assessment, so a new lot's
  // first packs (which cannot say anything yet) never clear an open finding.
  const std::int64_t hold = std::max<std::int64_t>(
      settings_.compliance_hold_off_packs, settings_.compliance.min_packs + 2 * kAssessEveryPacks);
  if (pack.index - *low_since_ >= hold) {
    Finding f = Make(Transition::kCleared, Severity::kInfo, pack, figures);
    f.detector = "compliance";
    out->push_back(std::move(f));
    raised_.reset();
    announced_ = 0;
    low_since_.reset();
  }
}

LotReport LineCompliance::MakeReport(bool partial) const {
  LotReport r;
  r.line = line_;
  r.seq = seq_;
  r.boundary = std::string(comply::LotBoundaryName(settings_.lots.boundary));
  r.partial = partial;
  r.figures = lot_.Figures();
  r.opened_ms = (settings_.lots.boundary == comply::LotBoundary::kHour ||
                 settings_.lots.boundary == comply::LotBoundary::kShifts)
                    ? lot_opened_ms_
                    : r.figures.first_time_ms;
  if (settings_.lots.boundary == comply::LotBoundary::kHour ||
      settings_.lots.boundary == comply::LotBoundary::kShifts) {
    char iso[32];
    FormatTimeMs(lot_opened_ms_, iso);
    // "2026-03-02T06:00Z": minutes are enough to name an hour or a shift.
    r.lot_id = line_ + " " + std::string(iso, iso + 16) + "Z";
  } else {
    r.lot_id = line_ + " #" + std::to_string(seq_);
  }
  r.rules_id = table_->id;
  r.nominal_g = limits_.nominal_g;
  r.tne_g = limits_.tolerance_g;
  r.t1_g = limits_.t1_g;
  r.t2_g = limits_.t2_g;
  r.cost_per_kg = settings_.cost_per_kg;
  for (const comply::RuleVerdict& v : lot_.Verdicts(*table_, settings_.rules_allow_unconfirmed)) {
    r.verdicts.push_back({v.rule_id, std::string(comply::VerdictStateName(v.state)), v.margin,
                          std::string(v.margin_unit), v.note});
  }

  const comply::LotFigures& f = r.figures;
  if (f.count >= kAdviceMinPacks && std::isfinite(f.s_g)) {
    comply::SafeTargetSettings target_settings = settings_.safe_target;
    target_settings.allow_unconfirmed = settings_.rules_allow_unconfirmed;
    // The mean rule is judged on the lot as the policy makes it.
    target_settings.lot_packs = std::max<std::int64_t>(
        1, settings_.lots.boundary == comply::LotBoundary::kCount ? settings_.lots.packs_per_lot
                                                                  : ExpectedLotPacks(f));
    if (partial) target_settings.lot_packs = std::max(target_settings.lot_packs, f.count);
    comply::SafeTargetInput input;
    input.sigma_g = f.s_g;
    input.current_mean_g = f.mean_g;
    input.packs_per_hour = PacksPerHour(f);
    input.cost_per_kg = settings_.cost_per_kg;
    comply::SafeTarget target;
    if (comply::ComputeSafeTarget(*table_, limits_, input, target_settings, &target).ok()) {
      SafeTargetAdvice advice;
      advice.target_g = target.target_g;
      advice.binding_rule = std::string(target.binding_rule);
      advice.sigma_g = input.sigma_g;
      advice.packs_per_hour = input.packs_per_hour;
      advice.saving_per_pack_g = target.saving_per_pack_g;
      advice.saving_per_hour_g = target.saving_per_hour_g;
      advice.saving_per_year_kg = target.saving_per_year_kg;
      advice.saving_per_year_money = target.saving_per_year_money;
      advice.raise_needed = target.raise_needed;
      advice.text = comply::DescribeSafeTarget(target, input, target_settings);
      r.advice = std::move(advice);
    }
  }
  return r;
}

void LineCompliance::FinishLot(bool partial, std::vector<LotReport>* closed) {
  if (lot_seen_ > 0) closed->push_back(MakeReport(partial));
  lot_.Reset();
  lot_seen_ = 0;
  lot_open_ = false;
}

void LineCompliance::CloseLot(bool partial, std::vector<LotReport>* closed) {
  if (!lot_open_) return;
  FinishLot(partial, closed);
  // The next pack opens the next lot, whatever the policy (a fresh clock
  // treats it as the first pack).
  clock_ = comply::LotClock(settings_.lots);
}

std::optional<LotReport> LineCompliance::CurrentLot() const {
  if (!lot_open_) return std::nullopt;
  return MakeReport(true);
}

}  // namespace heft
