#include "io/alerting_settings.h"

#include <algorithm>

namespace heft {

std::string_view ChannelTypeName(ChannelType type) {
  switch (type) {
    case ChannelType::kLog:
      return "log";
    case ChannelType::kSyslog:
      return "syslog";
    case ChannelType::kCommand:
      return "command";
    case ChannelType::kWebhook:
      return "webhook";
    case ChannelType::kMqtt:
      return "mqtt";
  }
  return "log";
}

bool RouteMatches(const ChannelRoute& route, const AlarmTransition& t) {
  if (!t.annunciate) return false;
  if (t.cause == AlarmCause::kOperator && !route.operator_actions) return false;
  if (t.priority < route.min_priority) return false;
  auto contains = [](const std::vector<std::string>& list, const std::string& v) {
    return list.empty() || std::find(list.begin(), list.end(), v) != list.end();
  };
  // Flood summaries have no line: they go wherever the area goes.
  if (!t.line.empty() && !contains(route.lines, t.line)) return false;
  return contains(route.areas, t.area);
}

}  // namespace heft
