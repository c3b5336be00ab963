#include "core/monitor/settings_fingerprint.h"

#include <cstring>

namespace heft {

void Fingerprint::Bytes(const void* data, std::size_t n) {
  const auto* p = static_cast<const unsigned char*>(data);
  for (std::size_t i = 0; i < n; ++i) {
    hash_ ^= p[i];
    hash_ *= 1099511628211ull;  // FNV-1a 64 prime
  }
}

Fingerprint& Fingerprint::Add(std::int64_t value) {
  Bytes(&value, sizeof value);
  return *this;
}

Fingerprint& Fingerprint::Add(double value) {
  std::uint64_t bits = 0;
  std::memcpy(&bits, &value, sizeof bits);
  Bytes(&bits, sizeof bits);
  return *this;
}

Fingerprint& Fingerprint::Add(std::string_view text) {
  Add(static_cast<std::int64_t>(text.size()));
  Bytes(text.data(), text.size());
  return *this;
}

Fingerprint& Fingerprint::Add(const std::optional<double>& value) {
  Add(value.has_value());
  if (value) Add(*value);
  return *this;
}

Fingerprint& Fingerprint::Add(const std::optional<std::int64_t>& value) {
  Add(value.has_value());
  if (value) Add(*value);
  return *this;
}

std::uint64_t MonitorSettingsFingerprint(const LineSettings& s) {
  Fingerprint f;
  f.Add(s.nominal_g).Add(s.target_g).Add(s.heads);
  f.Add(s.false_alarms_per_day).Add(s.pack_rate_per_min).Add(s.min_shift_sigma);
  f.Add(s.baseline_packs).Add(s.silence_ms);
  f.Add(s.drift_lambda).Add(s.head_shift_sigma).Add(s.spread_ratio).Add(s.min_cycle_sigma);
  f.Add(s.cycle_window_packs).Add(s.cycle_every_packs).Add(s.run_rules).Add(s.subgroup_packs);
  f.Add(s.run_one_side_count).Add(s.run_trend_count).Add(s.run_sawtooth_count);
  f.Add(s.run_hugging_count).Add(s.run_avoiding_count);
  f.Add(s.stuck_packs).Add(s.outlier_burst_packs).Add(s.settling_alarm_packs);
  f.Add(s.baseline_block_packs).Add(s.gross_low_ratio).Add(s.gross_high_ratio);
  return f.value();
}

}  // namespace heft
