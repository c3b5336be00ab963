// lot_clock.cpp — lot boundaries from pack times.
#include "core/comply/lot_clock.h"

#include <algorithm>
#include <string>

namespace heft::comply {

namespace {
constexpr std::int64_t kMinuteMs = 60'000;
constexpr std::int64_t kHourMs = 60 * kMinuteMs;
constexpr std::int64_t kDayMs = 24 * kHourMs;

std::int64_t FloorDiv(std::int64_t a, std::int64_t b) {
  std::int64_t q = a / b;
  if ((a % b != 0) && ((a < 0) != (b < 0))) --q;
  return q;
}
}  // namespace

std::string_view LotBoundaryName(LotBoundary boundary) {
  switch (boundary) {
    case LotBoundary::kCount:
      return "count";
    case LotBoundary::kHour:
      return "hour";
    case LotBoundary::kShifts:
      return "shifts";
    case LotBoundary::kManual:
      return "manual";
  }
  return "?";
}

Status ValidateLotPolicy(const LotPolicy& policy) {
  if (policy.utc_offset_minutes < -16 * 60 || policy.utc_offset_minutes > 16 * 60) {
    return Status::Error("lot policy: utc_offset_minutes " +
                         std::to_string(policy.utc_offset_minutes) + " is outside ±16 h");
  }
  switch (policy.boundary) {
    case LotBoundary::kCount:
      if (policy.packs_per_lot < 1) {
        return Status::Error("lot policy: count lots need packs_per_lot ≥ 1");
      }
      break;
    case LotBoundary::kShifts: {
      if (policy.shift_start_minutes.empty()) {
        return Status::Error("lot policy: shift lots need at least one shift start");
      }
      for (std::size_t i = 0; i < policy.shift_start_minutes.size(); ++i) {
        const int m = policy.shift_start_minutes[i];
        if (m < 0 || m >= 24 * 60) {
          return Status::Error("lot policy: shift start " + std::to_string(i + 1) + " (" +
                               std::to_string(m) + " min) is outside 0..1439");
        }
        if (i > 0 && m <= policy.shift_start_minutes[i - 1]) {
          return Status::Error("lot policy: shift starts must be strictly increasing (start " +
                               std::to_string(i + 1) + ")");
        }
      }
      break;
    }
    case LotBoundary::kHour:
    case LotBoundary::kManual:
      break;
  }
  return Status::Ok();
}

LotClock::LotClock(LotPolicy policy) : policy_(std::move(policy)) {}

std::int64_t LotClock::PeriodStartMs(std::int64_t time_ms) const {
  const std::int64_t offset_ms = static_cast<std::int64_t>(policy_.utc_offset_minutes) * kMinuteMs;
  const std::int64_t local = time_ms + offset_ms;
  switch (policy_.boundary) {
    case LotBoundary::kHour:
      return FloorDiv(local, kHourMs) * kHourMs - offset_ms;
    case LotBoundary::kShifts: {
      const auto& starts = policy_.shift_start_minutes;
      if (starts.empty()) return time_ms;
      const std::int64_t day = FloorDiv(local, kDayMs);
      const std::int64_t in_day = local - day * kDayMs;
      // Last shift start at or before the time of day; before the first start
      // the pack belongs to the previous day's last shift.
      auto it = std::upper_bound(starts.begin(), starts.end(), in_day,
                                 [](std::int64_t t, int m) { return t < m * kMinuteMs; });
      std::int64_t start_local;
      if (it == starts.begin()) {
        start_local = (day - 1) * kDayMs + starts.back() * kMinuteMs;
      } else {
        start_local = day * kDayMs + *(it - 1) * kMinuteMs;
      }
      return start_local - offset_ms;
    }
    case LotBoundary::kCount:
    case LotBoundary::kManual:
      return time_ms;
  }
  return time_ms;
}

bool LotClock::StartsNewLot(std::int64_t time_ms, std::int64_t packs_in_current_lot) {
  const bool first = !started_;
  started_ = true;
  switch (policy_.boundary) {
    case LotBoundary::kManual:
      return first;
    case LotBoundary::kCount:
      return first || packs_in_current_lot >= policy_.packs_per_lot;
    case LotBoundary::kHour:
    case LotBoundary::kShifts: {
      // Within the current hour: no division needed (this runs for every pack).
      if (policy_.boundary == LotBoundary::kHour && current_period_ &&
          time_ms >= *current_period_ && time_ms - *current_period_ < kHourMs) {
        return first;
      }
      const std::int64_t period = PeriodStartMs(time_ms);
      const bool changed = !current_period_ || *current_period_ != period;
      current_period_ = period;
      return first || changed;
    }
  }
  return false;
}

void LotClock::NoteManualOpen(std::int64_t time_ms) {
  started_ = true;
  current_period_ = PeriodStartMs(time_ms);
}

}  // namespace heft::comply
