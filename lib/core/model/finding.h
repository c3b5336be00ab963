// finding.h — what the detection core reports: a pattern raised or cleared on a line.
//
// Findings are values produced by LineMonitor and consumed by the daemon, `heft
// replay`, the store and the message formatter. Record indexes are 0-based data
// record indexes in the source stream (the header line is not counted).
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace heft {

// The patterns heft recognises. The names are the replay/event-store contract.
enum class FindingKind : std::uint8_t {
  kShift,
  kDrift,
  kOscillation,
  kSettling,
  kSpread,
  kStuck,
  kSilence,
  kOutlier,
  kCompliance,
};
inline constexpr int kFindingKindCount = 9;

enum class Transition : std::uint8_t { kRaised, kCleared };

// How urgent the finding is for a person at the line.
enum class Severity : std::uint8_t { kInfo, kWarning, kAlarm };

struct Finding {
  Transition transition = Transition::kRaised;
  FindingKind kind = FindingKind::kShift;
  Severity severity = Severity::kWarning;
  std::string line;                    // line id
  std::int64_t at = 0;                 // record index at which the decision was made
  std::int64_t at_time_ms = 0;         // that record's time
  std::optional<std::int64_t> onset;   // estimated first affected record
  std::optional<std::int64_t> onset_time_ms;
  std::optional<std::int64_t> end;     // estimated last affected record (settling: first settled)
  std::optional<double> size_g;        // size of the change in grams (signed)
  std::optional<double> size_sigma;    // the same in baseline sigmas
  std::optional<double> level_g;       // estimated current level (mean) in grams
  std::optional<double> period_packs;  // cycle length, where it applies
  std::optional<int> head;             // filler head, where it applies
  std::optional<double> period_s;      // cycle length in seconds (from pack times)
  std::optional<double> slope_g_per_h; // drift: rate of change of the level, grams per hour
  std::string detector;                // which detector decided, e.g. "cusum"
};

// Stable lower-case names used in JSON, SQLite and messages.
std::string_view KindName(FindingKind kind);
std::string_view TransitionName(Transition transition);
std::string_view SeverityName(Severity severity);

// Inverse of KindName; nullopt for an unknown name.
std::optional<FindingKind> KindFromName(std::string_view name);

}  // namespace heft
