// sd_notifier.h — tells a service manager (systemd Type=notify) how heftd is
// doing: READY=1, STATUS=..., WATCHDOG=1, RELOADING=1, STOPPING=1.
//
// Written without libsystemd: one datagram per message to the AF_UNIX socket
// named in $NOTIFY_SOCKET (a leading '@' = the abstract namespace), as
// sd_notify(3) describes. When $NOTIFY_SOCKET is unset every call is a no-op,
// so heftd behaves the same outside systemd. The watchdog interval comes from
// $WATCHDOG_USEC (only when $WATCHDOG_PID is unset or names this process).
//
// Used by Daemon (daemon.h) through the Notifier interface; process tests
// bind their own datagram socket and read what arrives
// (tests/process/test_daemon_systemd.py). RecordingNotifier is the in-memory
// fake. Not thread-safe: called from the daemon's io_context thread only.
#pragma once

#include <chrono>
#include <string>
#include <string_view>
#include <vector>

namespace heft {

class Notifier {
 public:
  virtual ~Notifier() = default;
  // Sends one message of newline-separated KEY=VALUE assignments. Failures
  // are not errors for heftd (sd_notify(3): the result should be ignored),
  // but the first one is logged.
  virtual void Notify(std::string_view message) = 0;
  // The watchdog interval asked for; zero when the watchdog is off.
  virtual std::chrono::microseconds watchdog_interval() const = 0;
};

class SdNotifier final : public Notifier {
 public:
  // Reads $NOTIFY_SOCKET, $WATCHDOG_USEC and $WATCHDOG_PID.
  SdNotifier();
  ~SdNotifier() override;
  SdNotifier(const SdNotifier&) = delete;
  SdNotifier& operator=(const SdNotifier&) = delete;

  void Notify(std::string_view message) override;
  std::chrono::microseconds watchdog_interval() const override { return watchdog_; }
  bool enabled() const { return !socket_path_.empty(); }
  const std::string& socket_path() const { return socket_path_; }

 private:
  std::string socket_path_;  // as given; '@' first = abstract
  int fd_ = -1;
  bool warned_ = false;
  std::chrono::microseconds watchdog_{0};
};

// The fake: keeps every message.
class RecordingNotifier final : public Notifier {
 public:
  void Notify(std::string_view message) override { messages.emplace_back(message); }
  std::chrono::microseconds watchdog_interval() const override { return watchdog; }

  std::vector<std::string> messages;
  std::chrono::microseconds watchdog{0};
};

}  // namespace heft
