// channel.h — one way of delivering alarm transitions (syslog, command hook,
// HTTP webhook, MQTT), behind one interface.
//
// Deliver() takes one outbox row (the transition JSON, io/alarm_json) and
// returns OK only when the receiver has acknowledged it (syslog: the datagram
// was accepted; command: exit status 0; webhook: a 2xx answer; MQTT: PUBACK
// for every message). Anything else is an error and the outbox retries it
// later. Deliver() blocks for at most about the channel's timeout_ms.
// Each channel is used by exactly one DeliveryWorker thread; not thread-safe.
#pragma once

#include <memory>
#include <string>

#include "core/model/status.h"
#include "io/alarm_store.h"
#include "io/alerting_settings.h"

namespace heft {

class Channel {
 public:
  virtual ~Channel() = default;
  virtual Status Deliver(const OutboxItem& item) = 0;
  // Orderly stop (MQTT publishes "offline" and disconnects). Default: nothing.
  virtual void Close() {}
};

// The channel for `settings` (any type but kLog, which the daemon writes itself).
std::unique_ptr<Channel> MakeChannel(const ChannelSettings& settings);

}  // namespace heft
