// line_settings.h — what the core needs to know about one packaging line.
//
// Plain values with defaults a plant engineer would start from. The YAML
// loader (io/config) fills these; tests construct them directly.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>

namespace heft {

struct LineSettings {
  std::string product;               // free text for messages, e.g. "Rolled oats 500 g"
  std::optional<double> nominal_g;   // nominal quantity (label), grams
  std::optional<double> target_g;    // filler set point, grams
  int heads = 0;                     // filler heads (0 = not known)

  // Detector design targets.
  double false_alarms_per_day = 1.0;  // acceptable false alarms per line per 24 h of running
  double pack_rate_per_min = 120.0;   // expected packs per minute (for the design)
  double min_shift_sigma = 1.0;       // smallest mean change worth catching, in sigma

  // Start-up and silence.
  int baseline_packs = 300;           // packs collected after a start to learn the baseline
  std::int64_t silence_ms = 60'000;   // no pack for this long: line silent, restart settling

  // Gross packs: outside [low, high] x nominal (or x the baseline level when no nominal).
  double gross_low_ratio = 0.5;
  double gross_high_ratio = 1.5;
};

struct PlantSettings {
  LineSettings defaults;                                  // for lines the config does not name
  std::map<std::string, LineSettings, std::less<>> lines;  // by line id
  std::size_t max_lines = 1000;                           // refuse new line ids beyond this
};

}  // namespace heft
