// webhook_channel.h — alarm transitions as JSON POSTs to an HTTP endpoint.
//
// One request per transition: Content-Type application/json, the transition
// JSON as body, `Idempotency-Key: EVENT_ID` and `X-Heft-Event-Id: EVENT_ID`
// headers (receivers drop duplicates by it), `Authorization: Bearer TOKEN`
// when a token is configured. A 2xx answer is an acknowledgement; anything
// else (refused connection, timeout, 5xx, 4xx) is retried by the outbox with
// backoff. Plain HTTP over TCP with Boost.Beast (HTTPS is not built in).
// Used by one DeliveryWorker.
#pragma once

#include <string>

#include "io/notify/channel.h"

namespace heft {

struct HttpUrl {
  std::string host;
  std::string port = "80";
  std::string target = "/";
};
// "http://host[:port][/path]" → parts; error for anything else.
Status ParseHttpUrl(const std::string& url, HttpUrl* out);

class WebhookChannel : public Channel {
 public:
  explicit WebhookChannel(ChannelSettings settings) : settings_(std::move(settings)) {}
  Status Deliver(const OutboxItem& item) override;

 private:
  ChannelSettings settings_;
};

}  // namespace heft
