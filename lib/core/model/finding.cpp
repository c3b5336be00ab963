#include "core/model/finding.h"

#include <array>

namespace heft {
namespace {
constexpr std::array<std::string_view, kFindingKindCount> kKindNames = {
    "shift", "drift", "oscillation", "settling", "spread",
    "stuck", "silence", "outlier", "compliance"};
}  // namespace

std::string_view KindName(FindingKind kind) { return kKindNames[static_cast<int>(kind)]; }

std::string_view TransitionName(Transition transition) {
  return transition == Transition::kRaised ? "raised" : "cleared";
}

std::string_view SeverityName(Severity severity) {
  switch (severity) {
    case Severity::kInfo:
      return "info";
    case Severity::kWarning:
      return "warning";
    case Severity::kAlarm:
      return "alarm";
  }
  return "warning";
}

std::optional<FindingKind> KindFromName(std::string_view name) {
  for (int i = 0; i < kFindingKindCount; ++i) {
    if (kKindNames[i] == name) return static_cast<FindingKind>(i);
  }
  return std::nullopt;
}

}  // namespace heft
