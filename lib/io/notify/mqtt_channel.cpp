#include "io/notify/mqtt_channel.h"

#include <mosquitto.h>

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <cstring>
#include <mutex>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

namespace heft {
namespace {

std::once_flag g_lib_init;
// libmosquitto sets up its OpenSSL state (a UI method) lazily in the first TLS
// connect, unguarded: two TLS channels connecting at once on their worker
// threads race there (seen as a leak under LeakSanitizer). TLS connects take
// turns; plain ones do not need to.
std::mutex g_tls_connect;

extern "C" void OnConnectTrampoline(mosquitto*, void* self, int rc) {
  static_cast<MqttChannel*>(self)->OnConnect(rc);
}
extern "C" void OnDisconnectTrampoline(mosquitto*, void* self, int rc) {
  static_cast<MqttChannel*>(self)->OnDisconnect(rc);
}
extern "C" void OnPublishTrampoline(mosquitto*, void* self, int mid) {
  static_cast<MqttChannel*>(self)->OnPublish(mid);
}

std::string Str(const nlohmann::json& j, const char* key) {
  return j.contains(key) && j[key].is_string() ? j[key].get<std::string>() : std::string();
}

}  // namespace

MqttChannel::MqttChannel(ChannelSettings settings) : settings_(std::move(settings)) {
  std::call_once(g_lib_init, [] { mosquitto_lib_init(); });
}

MqttChannel::~MqttChannel() { Drop(); }

void MqttChannel::OnConnect(int rc) {
  connect_rc_ = rc;
  connected_ = rc == 0;
}
void MqttChannel::OnDisconnect(int) { connected_ = false; }
void MqttChannel::OnPublish(int mid) { acked_.push_back(mid); }

void MqttChannel::Drop() {
  if (mosq_ != nullptr) {
    mosquitto_disconnect(mosq_);
    mosquitto_destroy(mosq_);
    mosq_ = nullptr;
  }
  connected_ = false;
}

Status MqttChannel::Connect() {
  Drop();
  mosq_ = mosquitto_new(settings_.client_id.c_str(), true, this);
  if (mosq_ == nullptr) return Status::Error("mqtt: cannot create a client");
  mosquitto_connect_callback_set(mosq_, OnConnectTrampoline);
  mosquitto_disconnect_callback_set(mosq_, OnDisconnectTrampoline);
  mosquitto_publish_callback_set(mosq_, OnPublishTrampoline);
  if (!settings_.username.empty()) {
    mosquitto_username_pw_set(mosq_, settings_.username.c_str(),
                              settings_.password.empty() ? nullptr : settings_.password.c_str());
  }
  if (settings_.tls.enabled) {
    const char* ca = settings_.tls.ca_file.empty() ? nullptr : settings_.tls.ca_file.c_str();
    const int rc = mosquitto_tls_set(
        mosq_, ca, ca == nullptr ? "/etc/ssl/certs" : nullptr,
        settings_.tls.cert_file.empty() ? nullptr : settings_.tls.cert_file.c_str(),
        settings_.tls.key_file.empty() ? nullptr : settings_.tls.key_file.c_str(), nullptr);
    if (rc != MOSQ_ERR_SUCCESS) {
      return Status::Error(fmt::format("mqtt: TLS setup: {}", mosquitto_strerror(rc)));
    }
    mosquitto_tls_insecure_set(mosq_, settings_.tls.insecure);
  }
  const std::string status_topic = settings_.topic_prefix + "/status";
  mosquitto_will_set(mosq_, status_topic.c_str(), 7, "offline", 1, true);
  connect_rc_ = -1;
  int rc = MOSQ_ERR_SUCCESS;
  {
    std::unique_lock<std::mutex> tls_turn(g_tls_connect, std::defer_lock);
    if (settings_.tls.enabled) tls_turn.lock();
    rc = mosquitto_connect(mosq_, settings_.host.c_str(), settings_.port, settings_.keepalive_s);
  }
  if (rc != MOSQ_ERR_SUCCESS) {
    const std::string reason = rc == MOSQ_ERR_ERRNO ? std::strerror(errno) : mosquitto_strerror(rc);
    Drop();
    return Status::Error(
        fmt::format("mqtt {}:{}: cannot connect: {}", settings_.host, settings_.port, reason));
  }
  const auto deadline =
      std::chrono::steady_clock::now() + std::chrono::milliseconds(settings_.timeout_ms);
  while (connect_rc_ < 0 && std::chrono::steady_clock::now() < deadline) {
    rc = mosquitto_loop(mosq_, 50, 1);
    if (rc != MOSQ_ERR_SUCCESS) break;
  }
  if (!connected_) {
    const std::string reason =
        connect_rc_ > 0 ? mosquitto_connack_string(connect_rc_) : "no CONNACK in time";
    Drop();
    return Status::Error(
        fmt::format("mqtt {}:{}: connect refused: {}", settings_.host, settings_.port, reason));
  }
  // Birth message: overwrites an "offline" will left by an earlier run.
  return Publish(status_topic, "online", true);
}

Status MqttChannel::Publish(const std::string& topic, const std::string& payload, bool retain) {
  int mid = 0;
  int rc = mosquitto_publish(mosq_, &mid, topic.c_str(), static_cast<int>(payload.size()),
                             payload.data(), 1, retain);
  if (rc != MOSQ_ERR_SUCCESS) {
    return Status::Error(fmt::format("mqtt: publish {}: {}", topic, mosquitto_strerror(rc)));
  }
  const auto deadline =
      std::chrono::steady_clock::now() + std::chrono::milliseconds(settings_.timeout_ms);
  while (std::find(acked_.begin(), acked_.end(), mid) == acked_.end()) {
    if (!connected_ || std::chrono::steady_clock::now() >= deadline) {
      return Status::Error(fmt::format("mqtt: no PUBACK for {} ({})", topic,
                                       connected_ ? "timeout" : "connection lost"));
    }
    rc = mosquitto_loop(mosq_, 50, 1);
    if (rc != MOSQ_ERR_SUCCESS) {
      connected_ = false;
      return Status::Error(fmt::format("mqtt: {}", mosquitto_strerror(rc)));
    }
  }
  std::erase(acked_, mid);
  return Status::Ok();
}

Status MqttChannel::Deliver(const OutboxItem& item) {
  const auto j = nlohmann::json::parse(item.payload, nullptr, false);
  if (j.is_discarded()) return Status::Error("mqtt: outbox payload is not JSON");
  if (mosq_ == nullptr || !connected_) {
    if (Status s = Connect(); !s.ok()) return s;
  }
  const std::string line = Str(j, "line");
  const std::string kind = Str(j, "kind");
  const std::string base = line.empty() ? settings_.topic_prefix + "/area/" + Str(j, "area")
                                        : settings_.topic_prefix + "/" + line;
  std::string alarm_leaf = kind;
  if (j.contains("head") && j["head"].is_number_integer()) {
    alarm_leaf += "-h" + std::to_string(j["head"].get<int>());
  }
  Status s = Publish(base + "/event", item.payload, false);
  if (s.ok()) s = Publish(base + "/alarm/" + alarm_leaf, item.payload, true);
  if (s.ok() && !line.empty() && j.contains("line_state") && j["line_state"].is_object()) {
    nlohmann::ordered_json state;
    state["schema"] = 1;
    state["line"] = line;
    state["ts"] = Str(j, "ts");
    state["last_event_id"] = Str(j, "event_id");
    for (const auto& [k, v] : j["line_state"].items()) state[k] = v;
    s = Publish(base + "/state", state.dump(), true);
  }
  if (!s.ok()) Drop();  // start clean next time
  return s;
}

void MqttChannel::Close() {
  if (mosq_ != nullptr && connected_) {
    // A clean DISCONNECT discards the will, so say "offline" ourselves.
    Publish(settings_.topic_prefix + "/status", "offline", true);
  }
  Drop();
}

}  // namespace heft
