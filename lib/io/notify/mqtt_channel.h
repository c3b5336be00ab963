// mqtt_channel.h — alarm transitions to an MQTT broker (libmosquitto, MQTT
// 3.1.1, QoS 1), following operations.md §4:
//   PREFIX/status                 retained "online"/"offline"; "offline" is
//                                 also the last will, so subscribers learn
//                                 when heftd is gone without a goodbye
//   PREFIX/LINE/event             every transition (JSON, not retained)
//   PREFIX/LINE/alarm/KIND[-hN]   retained current state of one alarm (JSON)
//   PREFIX/LINE/state             retained summary of the line's alarms
// Flood summaries use PREFIX/area/AREA/event and PREFIX/area/AREA/alarm/flood.
// Delivered = PUBACK for every message of the transition. A broker that is
// down makes Deliver fail fast; the outbox retries. QoS 1 may duplicate:
// receivers drop duplicates by "event_id". Username/password and TLS (CA
// file, client certificate, insecure) from the config.
// Runs libmosquitto's network loop on the calling (DeliveryWorker) thread.
#pragma once

#include <string>
#include <vector>

#include "io/notify/channel.h"

struct mosquitto;

namespace heft {

class MqttChannel : public Channel {
 public:
  explicit MqttChannel(ChannelSettings settings);
  ~MqttChannel() override;
  Status Deliver(const OutboxItem& item) override;
  void Close() override;

  // Callbacks from libmosquitto (C linkage trampolines call these).
  void OnConnect(int rc);
  void OnDisconnect(int rc);
  void OnPublish(int mid);

 private:
  Status Connect();
  void Drop();
  Status Publish(const std::string& topic, const std::string& payload, bool retain);

  ChannelSettings settings_;
  mosquitto* mosq_ = nullptr;
  bool connected_ = false;
  int connect_rc_ = -1;
  std::vector<int> acked_;
};

}  // namespace heft
