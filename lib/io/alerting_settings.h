// alerting_settings.h — the `alerting:` block of the configuration: alarm
// lifecycle settings, message templates, outbox and delivery channels with
// their routing. Filled by io/alerting_loader; read by heftd. Plain values.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "core/alarm/alarm_message.h"
#include "core/alarm/alarm_settings.h"
#include "core/alarm/alarm_types.h"

namespace heft {

// Which transitions a channel receives. Empty lists match everything.
struct ChannelRoute {
  std::vector<std::string> lines;
  std::vector<std::string> areas;
  AlarmPriority min_priority = AlarmPriority::kLow;
  bool operator_actions = true;  // acknowledged/shelved/unshelved transitions too
};

enum class ChannelType { kLog, kSyslog, kCommand, kWebhook, kMqtt };

// TLS of an mqtt channel (`tls:` block) and of an https:// webhook. The
// server certificate is always verified against ca_file, else the system
// store (/etc/ssl/certs); its host name too, except with mqtt's `insecure`.
struct ChannelTls {
  bool enabled = false;   // mqtt: a `tls:` block is present; webhook: the URL is https://
  std::string ca_file;    // empty = the system CA store
  std::string cert_file;  // client certificate (optional; mqtt only)
  std::string key_file;
  bool insecure = false;  // mqtt only: skip host name verification (test brokers only)
};

struct ChannelSettings {
  std::string name;
  ChannelType type = ChannelType::kLog;
  ChannelRoute route;
  int timeout_ms = 5000;
  // command
  std::vector<std::string> argv;
  // webhook
  std::string url;
  std::string bearer_token;
  // mqtt
  std::string host = "127.0.0.1";
  int port = 1883;
  std::string client_id = "heftd";
  std::string topic_prefix = "heft";
  std::string username;
  std::string password;
  int keepalive_s = 30;
  ChannelTls tls;
  // syslog
  std::string socket = "/dev/log";
  int facility = 16;  // local0
};

struct OutboxSettings {
  std::int64_t expire_ms = 24 * 3'600'000;  // undelivered after this: expired
  std::int64_t retry_min_ms = 500;          // first retry delay, doubling ...
  std::int64_t retry_max_ms = 60'000;       // ... up to this
};

struct AlertingSettings {
  AlarmSettings alarm;
  std::string messages_file;  // config/messages.yaml style; empty = built-in texts
  MessageCatalog catalog;     // loaded from messages_file
  OutboxSettings outbox;
  std::vector<ChannelSettings> channels;
};

std::string_view ChannelTypeName(ChannelType type);

// True when `route` takes transition `t` (area already resolved in t).
bool RouteMatches(const ChannelRoute& route, const AlarmTransition& t);

}  // namespace heft
