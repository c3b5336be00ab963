#include "io/notify/syslog_channel.h"

#include <sys/socket.h>
#include <sys/un.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

namespace heft {

SyslogChannel::SyslogChannel(ChannelSettings settings) : settings_(std::move(settings)) {}

SyslogChannel::~SyslogChannel() {
  if (fd_ >= 0) ::close(fd_);
}

int SyslogChannel::SeverityOf(const std::string& state, const std::string& why,
                              const std::string& priority) {
  const bool raise = state == "active_unack" &&
                     (why == "raised" || why == "chattering" || why == "escalated" ||
                      why == "realarm" || why == "unsuppressed" || why == "flood_started" ||
                      why == "unshelved" || why == "shelve_expired");
  if (raise) return priority == "high" ? 4 : 5;
  return 6;
}

std::string SyslogChannel::Format(const std::string& payload, int facility, const std::string& host,
                                  int pid) {
  const auto j = nlohmann::json::parse(payload, nullptr, false);
  if (j.is_discarded()) return "";
  auto str = [&](const char* key) {
    return j.contains(key) && j[key].is_string() ? j[key].get<std::string>() : std::string();
  };
  const int severity = SeverityOf(str("state"), str("why"), str("priority"));
  // RFC 5424: <PRI>VERSION TIMESTAMP HOSTNAME APP-NAME PROCID MSGID SD MSG
  return fmt::format(
      "<{}>1 {} {} heftd {} ALARM [heft@32473 event_id=\"{}\" alarm=\"{}\" "
      "state=\"{}\" priority=\"{}\"] {}",
      facility * 8 + severity, str("ts"), host.empty() ? "-" : host, pid, str("event_id"),
      str("alarm"), str("state"), str("priority"), str("message"));
}

Status SyslogChannel::Deliver(const OutboxItem& item) {
  if (fd_ < 0) {
    fd_ = ::socket(AF_UNIX, SOCK_DGRAM | SOCK_CLOEXEC, 0);
    if (fd_ < 0) return Status::Error(std::string("syslog socket: ") + std::strerror(errno));
  }
  sockaddr_un addr{};
  addr.sun_family = AF_UNIX;
  if (settings_.socket.size() >= sizeof addr.sun_path) {
    return Status::Error("syslog socket path too long: " + settings_.socket);
  }
  std::memcpy(addr.sun_path, settings_.socket.c_str(), settings_.socket.size() + 1);
  char host[256] = {};
  ::gethostname(host, sizeof host - 1);
  const std::string line = Format(item.payload, settings_.facility, host, ::getpid());
  if (line.empty()) return Status::Error("syslog: outbox payload is not JSON");
  if (::sendto(fd_, line.data(), line.size(), MSG_NOSIGNAL, reinterpret_cast<sockaddr*>(&addr),
               sizeof addr) < 0) {
    return Status::Error(
        fmt::format("syslog: sending to {}: {}", settings_.socket, std::strerror(errno)));
  }
  return Status::Ok();
}

}  // namespace heft
