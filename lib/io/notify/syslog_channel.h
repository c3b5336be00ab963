// syslog_channel.h — alarm transitions as RFC 5424 messages over a unix
// datagram socket (/dev/log, or a configured path).
//
// Severity (RFC 5424 §6.2.1, operations.md §3.6 design note): an alarm
// raised at high priority → 4 (warning), other raises → 5 (notice);
// acknowledge, shelve, return to normal and the rest → 6 (informational).
// 0 and 1 are never used for process alarms. Used by one DeliveryWorker.
#pragma once

#include <string>

#include "io/notify/channel.h"

namespace heft {

class SyslogChannel : public Channel {
 public:
  explicit SyslogChannel(ChannelSettings settings);
  ~SyslogChannel() override;
  Status Deliver(const OutboxItem& item) override;

  // The RFC 5424 line for one transition JSON (for tests).
  static std::string Format(const std::string& payload, int facility, const std::string& host,
                            int pid);
  static int SeverityOf(const std::string& state, const std::string& why,
                        const std::string& priority);

 private:
  ChannelSettings settings_;
  int fd_ = -1;
};

}  // namespace heft
