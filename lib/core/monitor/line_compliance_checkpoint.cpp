// line_compliance_checkpoint.cpp — LineCompliance::SaveCheckpoint /
// RestoreCheckpoint / SettingsFingerprint, kept apart from the per-pack path.
// A new member of LineCompliance that changes with packs must be added to
// LineComplianceCheckpoint, the codec (io/checkpoint_codec.cpp) and here.
#include <algorithm>
#include <string>

#include "core/monitor/line_compliance.h"
#include "core/monitor/settings_fingerprint.h"

namespace heft {

std::uint64_t LineCompliance::SettingsFingerprint() const {
  Fingerprint f;
  f.Add(table_->id).Add(settings_.rules);
  f.Add(limits_.nominal_units).Add(limits_.tolerance_units).Add(limits_.t1_units);
  f.Add(limits_.t2_units);
  f.Add(t1_share_limit_);
  const comply::LotPolicy& lots = settings_.lots;
  f.Add(static_cast<int>(lots.boundary)).Add(lots.packs_per_lot).Add(lots.utc_offset_minutes);
  f.Add(static_cast<std::int64_t>(lots.shift_start_minutes.size()));
  for (int minute : lots.shift_start_minutes) f.Add(minute);
  f.Add(settings_.cost_per_kg).Add(settings_.rejects_in_lot).Add(settings_.rules_allow_unconfirmed);
  f.Add(settings_.gross_low_ratio).Add(settings_.gross_high_ratio).Add(settings_.pack_rate_per_min);
  const comply::ComplianceAlertSettings& a = settings_.compliance;
  f.Add(a.min_packs).Add(a.mean_warn_probability).Add(a.mean_alarm_probability);
  f.Add(a.t1_warn_share_of_limit).Add(a.t1_share_min_packs).Add(a.t1_warn_probability);
  f.Add(a.t1_alarm_probability).Add(a.t2_alarm);
  f.Add(settings_.compliance_hold_off_packs);
  const comply::SafeTargetSettings& t = settings_.safe_target;
  f.Add(t.t1_share_of_limit).Add(t.tail_probability).Add(t.mean_confidence).Add(t.lot_packs);
  f.Add(t.mean_margin_g).Add(t.hours_per_year).Add(t.allow_unconfirmed);
  return f.value();
}

LineComplianceCheckpoint LineCompliance::SaveCheckpoint() const {
  LineComplianceCheckpoint c;
  c.settings_fingerprint = SettingsFingerprint();
  c.clock = clock_.SaveState();
  c.lot = lot_.Save();
  c.seq = seq_;
  c.lot_opened_ms = lot_opened_ms_;
  c.lot_open = lot_open_;
  c.lot_seen = lot_seen_;
  c.level_ring.assign(level_ring_.begin(), level_ring_.end());
  c.level_next = level_next_;
  c.level_count = level_count_;
  c.level_sum = level_sum_;
  c.raised = raised_;
  c.announced = announced_;
  c.low_since = low_since_;
  c.since_assess = since_assess_;
  c.open_lot = CurrentLot();
  return c;
}

Status LineCompliance::RestoreCheckpoint(const LineComplianceCheckpoint& c) {
  const auto refuse = [this](const std::string& why) {
    return Status::Error("line " + line_ + ": lot not continued: " + why);
  };
  if (seq_ != 0 || lot_seen_ != 0) return refuse("lots have already started");
  if (c.settings_fingerprint != SettingsFingerprint()) {
    return refuse("the lot settings or limits changed since it was saved");
  }
  if (c.level_ring.size() != level_ring_.size() || c.level_next < 0 ||
      c.level_next >= kLevelWindowPacks || c.level_count < 0 || c.level_count > kLevelWindowPacks ||
      c.seq < 0 || c.lot_seen < 0 || (c.lot_open && c.seq == 0) ||
      (c.raised && *c.raised > Severity::kAlarm)) {
    return refuse("checkpoint values out of range");
  }
  clock_.RestoreState(c.clock);
  lot_.Restore(c.lot);
  seq_ = c.seq;
  lot_opened_ms_ = c.lot_opened_ms;
  lot_open_ = c.lot_open;
  lot_seen_ = c.lot_seen;
  std::copy(c.level_ring.begin(), c.level_ring.end(), level_ring_.begin());
  level_next_ = c.level_next;
  level_count_ = c.level_count;
  level_sum_ = c.level_sum;
  raised_ = c.raised;
  announced_ = c.announced;
  low_since_ = c.low_since;
  since_assess_ = c.since_assess;
  return Status::Ok();
}

}  // namespace heft
