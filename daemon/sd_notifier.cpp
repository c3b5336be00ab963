#include "sd_notifier.h"

#include <sys/socket.h>
#include <sys/un.h>
#include <unistd.h>

#include <cerrno>
#include <cstdlib>
#include <cstring>

#include <spdlog/spdlog.h>

namespace heft {
namespace {

const char* Env(const char* name) {
  const char* value = std::getenv(name);
  return value != nullptr && *value != '\0' ? value : nullptr;
}

// Parses a positive decimal; 0 when the text is not one.
long long ParsePositive(const char* text) {
  if (text == nullptr) return 0;
  char* end = nullptr;
  errno = 0;
  const long long value = std::strtoll(text, &end, 10);
  if (errno != 0 || end == text || *end != '\0' || value <= 0) return 0;
  return value;
}

}  // namespace

SdNotifier::SdNotifier() {
  if (const char* path = Env("NOTIFY_SOCKET")) {
    socket_path_ = path;
    fd_ = ::socket(AF_UNIX, SOCK_DGRAM | SOCK_CLOEXEC, 0);
    if (fd_ < 0) spdlog::warn("systemd notify: cannot create a socket: {}", std::strerror(errno));
  }
  // sd_watchdog_enabled(3): WATCHDOG_PID, when set, must name this process.
  const long long pid = ParsePositive(Env("WATCHDOG_PID"));
  if (Env("WATCHDOG_PID") == nullptr || pid == static_cast<long long>(::getpid())) {
    watchdog_ = std::chrono::microseconds(ParsePositive(Env("WATCHDOG_USEC")));
  }
}

SdNotifier::~SdNotifier() {
  if (fd_ >= 0) ::close(fd_);
}

void SdNotifier::Notify(std::string_view message) {
  if (socket_path_.empty() || fd_ < 0) return;
  sockaddr_un address = {};
  address.sun_family = AF_UNIX;
  if (socket_path_.size() >= sizeof address.sun_path) {
    if (!warned_) spdlog::warn("systemd notify: NOTIFY_SOCKET path too long; not notifying");
    warned_ = true;
    return;
  }
  std::memcpy(address.sun_path, socket_path_.data(), socket_path_.size());
  socklen_t length = static_cast<socklen_t>(offsetof(sockaddr_un, sun_path) + socket_path_.size());
  if (socket_path_[0] == '@') {
    address.sun_path[0] = '\0';  // abstract namespace: no terminating NUL counted
  } else {
    length += 1;  // the terminating NUL
  }
  const ssize_t sent = ::sendto(fd_, message.data(), message.size(), MSG_NOSIGNAL | MSG_DONTWAIT,
                                reinterpret_cast<const sockaddr*>(&address), length);
  if (sent < 0 && !warned_) {
    warned_ = true;  // once: a missing manager must not flood the log
    spdlog::warn("systemd notify: cannot send to {}: {}", socket_path_, std::strerror(errno));
  }
}

}  // namespace heft
