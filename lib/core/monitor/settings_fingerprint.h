// settings_fingerprint.h — a 64-bit fingerprint of the settings a restart
// checkpoint was made under, so a checkpoint is only restored into a line
// built from the same settings.
//
// FNV-1a over the values' bit patterns (doubles exactly, optionals with a
// presence byte, strings with their length): the same settings give the same
// number on every run and machine of the same byte order. Not a security hash.
// Pure; a Fingerprint is a local value.
#pragma once

#include <cstdint>
#include <optional>
#include <string_view>

#include "core/monitor/line_settings.h"

namespace heft {

class Fingerprint {
 public:
  Fingerprint& Add(std::int64_t value);
  Fingerprint& Add(double value);
  Fingerprint& Add(bool value) { return Add(static_cast<std::int64_t>(value ? 1 : 0)); }
  Fingerprint& Add(int value) { return Add(static_cast<std::int64_t>(value)); }
  Fingerprint& Add(std::string_view text);
  Fingerprint& Add(const std::optional<double>& value);
  Fingerprint& Add(const std::optional<std::int64_t>& value);
  std::uint64_t value() const { return hash_; }

 private:
  void Bytes(const void* data, std::size_t n);
  std::uint64_t hash_ = 14695981039346656037ull;  // FNV-1a 64 offset basis
};

// What a LineMonitor is built from: the line's targets (nominal_g, target_g,
// heads) and every detection setting (the same set a reload says "applies
// after a restart"). A checkpoint made under other values is not restored:
// the line settles anew under the new ones.
std::uint64_t MonitorSettingsFingerprint(const LineSettings& settings);

}  // namespace heft
