// line_compliance.h — net-content compliance and giveaway accounting for one
// line, pack by pack: lots, live risk, `compliance` findings and closed-lot
// reports with the lowest-safe-target advice.
//
// Owned by the Plant beside the line's LineMonitor (only for lines with a
// nominal quantity and a rule table) and called for every pack after the
// monitor. Per pack:
//   1. LotClock decides whether the pack opens a new lot; the old one closes
//      into a LotReport (figures, verdicts per rule, safe-target advice).
//   2. The pack joins the LotAccumulator as in-lot, rejected, gross (same rule
//      as the monitor: not positive, or outside gross_low/high_ratio × nominal)
//      or error.
//   3. Every few packs (at once on a T2 pack) the live risk is estimated
//      (compliance_risk.h: plug-in normal model on the lot's spread, remaining
//      packs at the line's recent level) and assessed (compliance_alert.h).
//   4. Level changes become findings of kind `compliance`: raised as a warning,
//      re-raised with severity alarm on escalation or when a new alarm reason
//      appears, cleared only after the risk has stayed low for
//      `compliance_hold_off_packs` (so the first packs of a new lot, which
//      say nothing yet, do not clear and re-raise an open finding).
//      size_g = lot mean − nominal, level_g = lot mean, detector = the reason.
//
// Figures are the packer's own control, not legal verification. Pure and
// deterministic; not thread-safe (one per line, owned by one Plant).
#pragma once

#include <array>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "core/comply/compliance_alert.h"
#include "core/comply/lot_accumulator.h"
#include "core/comply/lot_clock.h"
#include "core/comply/net_content_limits.h"
#include "core/comply/rule_table.h"
#include "core/model/finding.h"
#include "core/model/pack.h"
#include "core/model/status.h"
#include "core/monitor/line_compliance_checkpoint.h"
#include "core/monitor/line_settings.h"
#include "core/monitor/lot_report.h"

namespace heft {

// The gross-pack rule the line monitor applies when the nominal is known:
// not a positive finite weight, or outside [low, high] × nominal.
bool IsGrossPack(double grams, double nominal_g, double low_ratio, double high_ratio);

class LineCompliance {
 public:
  // Packs between risk assessments (a T2 pack is assessed at once). The projection
  // moves with the lot mean and a 60-pack level, slowly: 32 packs (16 s at 120 packs/min)
  // lose nothing against a lot of an hour, and cost a quarter of assessing every 8.
  static constexpr int kAssessEveryPacks = 32;
  // Packs in the rolling level the remaining packs of a lot are projected from.
  static constexpr int kLevelWindowPacks = 60;
  // Fewest in-lot packs for a safe-target advice in a closed lot.
  static constexpr std::int64_t kAdviceMinPacks = 30;

  // Fails (with the reason) when the settings have no nominal, the lot policy
  // is invalid or the nominal is outside the table. `table` must not be null.
  static Status Create(std::string line, const LineSettings& settings,
                       std::shared_ptr<const comply::RuleTable> table,
                       std::unique_ptr<LineCompliance>* out);

  // One pack (after the monitor saw it). Findings are appended to *out, lots
  // that this pack closed to *closed.
  void Push(const Pack& pack, std::vector<Finding>* out, std::vector<LotReport>* closed);

  // Closes the open lot now (operator command, shutdown, end of replay);
  // nothing when it holds no pack. `partial` marks a lot cut short.
  void CloseLot(bool partial, std::vector<LotReport>* closed);

  // The open lot's report as it stands (not closed), for status pages.
  std::optional<LotReport> CurrentLot() const;

  // Restart checkpoint (line_compliance_checkpoint.h, implemented in
  // line_compliance_checkpoint.cpp). RestoreCheckpoint REQUIRES a LineCompliance
  // that has taken no pack; it fails, changing nothing, when the checkpoint was
  // made under other lot settings (SettingsFingerprint) or is damaged.
  LineComplianceCheckpoint SaveCheckpoint() const;
  Status RestoreCheckpoint(const LineComplianceCheckpoint& checkpoint);
  // The lot settings and limits the figures, verdicts and findings depend on.
  std::uint64_t SettingsFingerprint() const;

  const comply::NetContentLimits& limits() const { return limits_; }
  std::optional<Severity> open_level() const { return raised_; }
  const std::string& line() const { return line_; }

 private:
  LineCompliance(std::string line, const LineSettings& settings,
                 std::shared_ptr<const comply::RuleTable> table,
                 const comply::NetContentLimits& limits);

  comply::PackRole RoleOf(const Pack& pack) const;
  void Assess(const Pack& pack, std::vector<Finding>* out);
  LotReport MakeReport(bool partial) const;
  void FinishLot(bool partial, std::vector<LotReport>* closed);
  // Packs the open lot is expected to hold in all (for the risk model).
  std::int64_t ExpectedLotPacks(const comply::LotFigures& figures) const;
  double PacksPerHour(const comply::LotFigures& figures) const;
  std::int64_t PeriodEndMs(std::int64_t period_start_ms) const;
  Finding Make(Transition transition, Severity severity, const Pack& at,
               const comply::LotFigures& figures) const;

  std::string line_;
  LineSettings settings_;
  std::shared_ptr<const comply::RuleTable> table_;
  comply::NetContentLimits limits_;
  std::optional<double> t1_share_limit_;
  comply::LotClock clock_;
  comply::LotAccumulator lot_;
  std::int64_t seq_ = 0;            // lots opened so far
  std::int64_t lot_opened_ms_ = 0;  // period start of the open lot
  bool lot_open_ = false;
  std::int64_t lot_seen_ = 0;  // packs of every kind in the open lot

  // Rolling level over the last kLevelWindowPacks in-lot packs.
  std::array<double, kLevelWindowPacks> level_ring_{};
  int level_next_ = 0;
  int level_count_ = 0;
  double level_sum_ = 0.0;

  // Finding state.
  std::optional<Severity> raised_;
  std::uint32_t announced_ = 0;            // bit per ComplianceReason announced since raised
  std::optional<std::int64_t> low_since_;  // first index of the current low spell
  int since_assess_ = 0;
};

}  // namespace heft
