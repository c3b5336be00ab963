// lot_clock.h — decides where one lot ends and the next begins, from pack
// times and counts: by count, by clock hour, by a shift schedule, or only by
// explicit operator open/close (manual).
//
// Pure: the local-time offset and the shift schedule are values (no time-zone
// database; daylight-saving changes need a new offset from the caller). One
// per line; not thread-safe.
#pragma once

#include <cstdint>
#include <optional>
#include <string_view>
#include <vector>

#include "core/model/status.h"

namespace heft::comply {

enum class LotBoundary : std::uint8_t { kCount, kHour, kShifts, kManual };
std::string_view LotBoundaryName(LotBoundary boundary);  // "count", "hour", "shifts", "manual"

struct LotPolicy {
  LotBoundary boundary = LotBoundary::kHour;
  std::int64_t packs_per_lot = 0;  // kCount
  std::vector<int>
      shift_start_minutes;     // kShifts: minutes after local midnight, e.g. 360, 840, 1320
  int utc_offset_minutes = 0;  // local time = UTC + offset (hour and shift lots)
};

// Checks a policy; the message says which field is wrong.
Status ValidateLotPolicy(const LotPolicy& policy);

class LotClock {
 public:
  explicit LotClock(LotPolicy policy);  // policy must pass ValidateLotPolicy

  // Called for every pack before it is added. True when the pack starts a new
  // lot: the first pack ever, a count lot that is full, or a time lot whose
  // period differs from the current one (also when device time steps back).
  // Manual lots start here only for the first pack (so no pack is outside a
  // lot); after that only by the operator's command.
  bool StartsNewLot(std::int64_t time_ms, std::int64_t packs_in_current_lot);

  // Start (UTC ms) of the hour or shift that holds `time_ms`; for count and
  // manual policies, `time_ms` itself.
  std::int64_t PeriodStartMs(std::int64_t time_ms) const;

  // The operator opened a lot by hand at `time_ms`: later packs of the same
  // hour/shift stay in it.
  void NoteManualOpen(std::int64_t time_ms);

  const LotPolicy& policy() const { return policy_; }

  // Restart checkpoint: where the clock stands, so a restored lot ends where it
  // would have (the policy comes from the config).
  struct State {
    bool started = false;
    std::optional<std::int64_t> current_period;
  };
  State SaveState() const { return {started_, current_period_}; }
  void RestoreState(const State& s) {
    started_ = s.started;
    current_period_ = s.current_period;
  }

 private:
  LotPolicy policy_;
  std::optional<std::int64_t> current_period_;
  bool started_ = false;
};

}  // namespace heft::comply
