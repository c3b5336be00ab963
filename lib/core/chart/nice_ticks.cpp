// nice_ticks.cpp — 1-2-5 numeric steps and clock-time steps.
#include "core/chart/nice_ticks.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>

namespace heft::chart {
namespace {

// Days since 1970-01-01 → civil date (proleptic Gregorian; H. Hinnant's
// public-domain days_from_civil inverse).
void CivilFromDays(std::int64_t z, int* y, int* m, int* d) {
  z += 719468;
  const std::int64_t era = (z >= 0 ? z : z - 146096) / 146097;
  const std::int64_t doe = z - era * 146097;
  const std::int64_t yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
  const std::int64_t doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
  const std::int64_t mp = (5 * doy + 2) / 153;
  *d = static_cast<int>(doy - (153 * mp + 2) / 5 + 1);
  *m = static_cast<int>(mp < 10 ? mp + 3 : mp - 9);
  *y = static_cast<int>(yoe + era * 400 + (*m <= 2 ? 1 : 0));
}

std::int64_t FloorDiv(std::int64_t a, std::int64_t b) {
  std::int64_t q = a / b;
  if ((a % b != 0) && ((a < 0) != (b < 0))) --q;
  return q;
}

struct Parts {
  int year, month, day, hour, minute, second;
};

Parts Split(std::int64_t local_ms) {
  const std::int64_t seconds = FloorDiv(local_ms, 1000);
  const std::int64_t days = FloorDiv(seconds, 86400);
  const std::int64_t rest = seconds - days * 86400;
  Parts p{};
  CivilFromDays(days, &p.year, &p.month, &p.day);
  p.hour = static_cast<int>(rest / 3600);
  p.minute = static_cast<int>(rest / 60 % 60);
  p.second = static_cast<int>(rest % 60);
  return p;
}

constexpr std::int64_t kSecond = 1000;
constexpr std::int64_t kMinute = 60 * kSecond;
constexpr std::int64_t kHour = 60 * kMinute;
constexpr std::int64_t kDay = 24 * kHour;
constexpr std::array<std::int64_t, 22> kTimeSteps = {
    kSecond,  2 * kSecond, 5 * kSecond, 10 * kSecond, 15 * kSecond, 30 * kSecond,
    kMinute,  2 * kMinute, 5 * kMinute, 10 * kMinute, 15 * kMinute, 30 * kMinute,
    kHour,    2 * kHour,   3 * kHour,   6 * kHour,    12 * kHour,   kDay,
    2 * kDay, 7 * kDay,    14 * kDay,   28 * kDay};

}  // namespace

double NiceStepAtLeast(double x) {
  if (!(x > 0.0) || !std::isfinite(x)) return 1.0;
  const double exponent = std::floor(std::log10(x));
  const double base = std::pow(10.0, exponent);
  for (double m : {1.0, 2.0, 5.0, 10.0}) {
    // Tolerance: 0.2 / 0.1 must give 2, not 5.
    if (m * base >= x * (1.0 - 1e-9)) return m * base;
  }
  return 10.0 * base;
}

NiceAxis MakeNiceAxis(double data_min, double data_max, int target_ticks) {
  NiceAxis axis;
  if (!std::isfinite(data_min) || !std::isfinite(data_max)) {
    axis.ticks = {0.0, 0.5, 1.0};
    axis.step = 0.5;
    axis.decimals = 1;
    return axis;
  }
  if (data_min > data_max) std::swap(data_min, data_max);
  if (data_max - data_min <= std::abs(data_max) * 1e-12) {
    // One value (or all equal): show it in the middle of a small range.
    const double pad = data_max == 0.0 ? 1.0 : std::max(std::abs(data_max) * 0.002, 0.1);
    data_min -= pad;
    data_max += pad;
  }
  target_ticks = std::max(target_ticks, 2);
  const double step = NiceStepAtLeast((data_max - data_min) / (target_ticks - 1));
  const double lo_index = std::floor(data_min / step + 1e-9);
  const double hi_index = std::ceil(data_max / step - 1e-9);
  axis.step = step;
  axis.lo = lo_index * step;
  axis.hi = hi_index * step;
  for (double i = lo_index; i <= hi_index + 0.5; i += 1.0) {
    double tick = i * step;
    if (std::abs(tick) < step * 1e-9) tick = 0.0;
    axis.ticks.push_back(tick);
  }
  axis.decimals = std::max(0, static_cast<int>(-std::floor(std::log10(step) + 1e-9)));
  return axis;
}

std::string FormatNumber(double value, int decimals) {
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%.*f", std::clamp(decimals, 0, 12), value);
  std::string text(buffer);
  if (text.find_first_not_of("-0.") == std::string::npos && text.front() == '-') text.erase(0, 1);
  return text;
}

TimeAxis MakeTimeAxis(std::int64_t lo_ms, std::int64_t hi_ms, int target_ticks,
                      int offset_minutes) {
  TimeAxis axis;
  if (hi_ms < lo_ms) std::swap(lo_ms, hi_ms);
  if (hi_ms - lo_ms < kSecond) {
    lo_ms -= 30 * kSecond;
    hi_ms += 30 * kSecond;
  }
  axis.lo_ms = lo_ms;
  axis.hi_ms = hi_ms;
  target_ticks = std::max(target_ticks, 2);
  const std::int64_t span = hi_ms - lo_ms;
  std::int64_t step = kTimeSteps.back();
  for (std::int64_t candidate : kTimeSteps) {
    if (span / candidate <= target_ticks) {
      step = candidate;
      break;
    }
  }
  while (span / step > 4 * target_ticks) step *= 2;  // spans beyond the table
  axis.step_ms = step;
  const std::int64_t offset_ms = static_cast<std::int64_t>(offset_minutes) * kMinute;
  // Weekly and longer steps align to days; shorter ones to their own multiple.
  const std::int64_t align = std::min(step, kDay);
  std::int64_t local = FloorDiv(lo_ms + offset_ms, align) * align;
  if (local < lo_ms + offset_ms) local += align;
  int previous_day = -1;
  for (std::int64_t t = local; t <= hi_ms + offset_ms; t += step) {
    const Parts p = Split(t);
    char buffer[48];
    const bool new_day = p.day != previous_day;
    if (step >= kDay) {
      std::snprintf(buffer, sizeof buffer, "%04d-%02d-%02d", p.year, p.month, p.day);
    } else if (step < kMinute) {
      std::snprintf(buffer, sizeof buffer, "%02d:%02d:%02d", p.hour, p.minute, p.second);
    } else if (new_day && previous_day != -1) {
      std::snprintf(buffer, sizeof buffer, "%02d-%02d %02d:%02d", p.month, p.day, p.hour, p.minute);
    } else {
      std::snprintf(buffer, sizeof buffer, "%02d:%02d", p.hour, p.minute);
    }
    previous_day = p.day;
    axis.ticks.push_back(t - offset_ms);
    axis.labels.emplace_back(buffer);
  }
  return axis;
}

std::string FormatDateTime(std::int64_t time_ms, int offset_minutes, bool with_seconds) {
  const Parts p = Split(time_ms + static_cast<std::int64_t>(offset_minutes) * kMinute);
  char buffer[48];
  if (with_seconds) {
    std::snprintf(buffer, sizeof buffer, "%04d-%02d-%02d %02d:%02d:%02d", p.year, p.month, p.day,
                  p.hour, p.minute, p.second);
  } else {
    std::snprintf(buffer, sizeof buffer, "%04d-%02d-%02d %02d:%02d", p.year, p.month, p.day, p.hour,
                  p.minute);
  }
  return buffer;
}

}  // namespace heft::chart
