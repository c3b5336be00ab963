#include "core/alarm/alarm_types.h"

#include <array>

namespace heft {
namespace {
constexpr std::array<std::string_view, 6> kStateNames = {
    "normal", "active_unack", "active_ack", "cleared_unack", "shelved", "suppressed"};
constexpr std::array<std::string_view, 3> kPriorityNames = {"low", "medium", "high"};
constexpr std::array<std::string_view, 3> kCauseNames = {"process", "operator", "system"};
}  // namespace

std::string_view AlarmStateName(AlarmState state) { return kStateNames[static_cast<int>(state)]; }
std::string_view AlarmPriorityName(AlarmPriority p) { return kPriorityNames[static_cast<int>(p)]; }
std::string_view AlarmCauseName(AlarmCause cause) { return kCauseNames[static_cast<int>(cause)]; }

std::optional<AlarmState> AlarmStateFromName(std::string_view name) {
  for (std::size_t i = 0; i < kStateNames.size(); ++i) {
    if (kStateNames[i] == name) return static_cast<AlarmState>(i);
  }
  return std::nullopt;
}

std::optional<AlarmPriority> AlarmPriorityFromName(std::string_view name) {
  for (std::size_t i = 0; i < kPriorityNames.size(); ++i) {
    if (kPriorityNames[i] == name) return static_cast<AlarmPriority>(i);
  }
  return std::nullopt;
}

std::string MakeAlarmId(std::string_view line, std::string_view kind, std::optional<int> head) {
  std::string id;
  id.reserve(line.size() + kind.size() + 8);
  id.append(line).append(":").append(kind);
  if (head) id.append(":h").append(std::to_string(*head));
  return id;
}

}  // namespace heft
