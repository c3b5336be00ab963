#include "io/notify/webhook_channel.h"

#include <boost/asio/connect.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/beast/core.hpp>
#include <boost/beast/http.hpp>
#include <chrono>

#include <fmt/format.h>

namespace heft {

namespace beast = boost::beast;
namespace http = beast::http;
using tcp = boost::asio::ip::tcp;

Status ParseHttpUrl(const std::string& url, HttpUrl* out) {
  constexpr std::string_view kScheme = "http://";
  if (url.rfind(kScheme, 0) != 0) return Status::Error("not an http:// URL: " + url);
  std::string rest = url.substr(kScheme.size());
  const std::size_t slash = rest.find('/');
  std::string authority = rest.substr(0, slash);
  out->target = slash == std::string::npos ? "/" : rest.substr(slash);
  if (authority.empty()) return Status::Error("no host in URL: " + url);
  const std::size_t colon = authority.rfind(':');
  if (colon != std::string::npos && authority.find(']') == std::string::npos) {
    out->port = authority.substr(colon + 1);
    authority.resize(colon);
  }
  if (!authority.empty() && authority.front() == '[' && authority.back() == ']') {
    authority = authority.substr(1, authority.size() - 2);
  }
  out->host = authority;
  if (out->host.empty() || out->port.empty()) return Status::Error("bad host or port in " + url);
  return Status::Ok();
}

Status WebhookChannel::Deliver(const OutboxItem& item) {
  HttpUrl url;
  if (Status s = ParseHttpUrl(settings_.url, &url); !s.ok()) return s;
  try {
    boost::asio::io_context io;
    tcp::resolver resolver(io);
    beast::tcp_stream stream(io);
    const auto timeout = std::chrono::milliseconds(settings_.timeout_ms);
    const auto results = resolver.resolve(url.host, url.port);
    stream.expires_after(timeout);
    stream.connect(results);
    http::request<http::string_body> request{http::verb::post, url.target, 11};
    request.set(http::field::host, url.host + ":" + url.port);
    request.set(http::field::user_agent, "heftd");
    request.set(http::field::content_type, "application/json");
    request.set("Idempotency-Key", item.event_id);
    request.set("X-Heft-Event-Id", item.event_id);
    if (!settings_.bearer_token.empty()) {
      request.set(http::field::authorization, "Bearer " + settings_.bearer_token);
    }
    request.body() = item.payload;
    request.prepare_payload();
    stream.expires_after(timeout);
    http::write(stream, request);
    beast::flat_buffer buffer;
    http::response<http::string_body> response;
    stream.expires_after(timeout);
    http::read(stream, buffer, response);
    beast::error_code ignored;
    stream.socket().shutdown(tcp::socket::shutdown_both, ignored);
    const unsigned code = response.result_int();
    if (code >= 200 && code < 300) return Status::Ok();
    return Status::Error(fmt::format("webhook {}: HTTP {}", settings_.url, code));
  } catch (const std::exception& e) {
    return Status::Error(fmt::format("webhook {}: {}", settings_.url, e.what()));
  }
}

}  // namespace heft
