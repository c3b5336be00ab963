// webhook_channel.h — alarm transitions as JSON POSTs to an HTTP endpoint.
//
// One request per transition: Content-Type application/json, the transition
// JSON as body, `Idempotency-Key: EVENT_ID` and `X-Heft-Event-Id: EVENT_ID`
// headers (receivers drop duplicates by it), `Authorization: Bearer TOKEN`
// when a token is configured. A 2xx answer is an acknowledgement; anything
// else (refused connection, timeout, 5xx, 4xx, a certificate that does not
// verify) is retried by the outbox with backoff. http:// over TCP or https://
// over TLS (Boost.Beast + Asio SSL on OpenSSL): the server certificate is
// verified against tls.ca_file or the system store, and so is its host name
// (SNI is sent for names, an IP URL is matched against the IP SANs). The
// whole exchange (resolve, connect, handshake, request, answer) is bounded by
// timeout_ms. Used by one DeliveryWorker.
#pragma once

#include <memory>
#include <string>

#include "io/notify/channel.h"

namespace boost::asio::ssl {
class context;
}

namespace heft {

struct HttpUrl {
  bool tls = false;  // https://
  std::string host;
  std::string port = "80";  // 443 for https://
  std::string target = "/";
};
// "http[s]://host[:port][/path]" → parts; error for anything else.
Status ParseHttpUrl(const std::string& url, HttpUrl* out);

class WebhookChannel : public Channel {
 public:
  explicit WebhookChannel(ChannelSettings settings);
  ~WebhookChannel() override;
  Status Deliver(const OutboxItem& item) override;

 private:
  ChannelSettings settings_;
  std::unique_ptr<boost::asio::ssl::context> tls_;  // https: made at the first delivery
};

}  // namespace heft
