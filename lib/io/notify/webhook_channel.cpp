#include "io/notify/webhook_channel.h"

#include <boost/asio/connect.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/ssl.hpp>
#include <boost/beast/core.hpp>
#include <boost/beast/http.hpp>
#include <boost/beast/ssl.hpp>
#include <chrono>
#include <type_traits>

#include <fmt/format.h>

#include "io/notify/tls_client.h"

namespace heft {

namespace beast = boost::beast;
namespace http = beast::http;
using tcp = boost::asio::ip::tcp;

namespace {

constexpr std::uint64_t kMaxAnswerBytes = 64 * 1024;  // receivers answer briefly

using Request = http::request<http::string_body>;
using TlsStream = beast::ssl_stream<beast::tcp_stream>;

// One POST and its answer, as a chain of async steps, so that one deadline
// (io_context::run_for) bounds all of them; the sync Beast calls have none.
template <class Stream>
class Exchange {
 public:
  Exchange(Stream& stream, tcp::resolver& resolver, const HttpUrl& url, Request& request)
      : stream_(stream), resolver_(resolver), url_(url), request_(request) {
    parser_.body_limit(kMaxAnswerBytes);
  }

  void Start() {
    resolver_.async_resolve(url_.host, url_.port,
                            [this](beast::error_code ec, tcp::resolver::results_type results) {
                              if (ec) return Finish(ec);
                              stage_ = "connecting";
                              beast::get_lowest_layer(stream_).async_connect(
                                  results, [this](beast::error_code ec2, const tcp::endpoint&) {
                                    if (ec2) return Finish(ec2);
                                    Handshake();
                                  });
                            });
  }

  bool finished() const { return finished_; }
  const beast::error_code& error() const { return ec_; }
  const char* stage() const { return stage_; }
  unsigned status() const { return parser_.get().result_int(); }

 private:
  void Handshake() {
    if constexpr (std::is_same_v<Stream, TlsStream>) {
      stage_ = "TLS handshake";
      stream_.async_handshake(boost::asio::ssl::stream_base::client, [this](beast::error_code ec) {
        if (ec) return Finish(ec);
        Send();
      });
    } else {
      Send();
    }
  }
  void Send() {
    stage_ = "sending";
    http::async_write(stream_, request_, [this](beast::error_code ec, std::size_t) {
      if (ec) return Finish(ec);
      stage_ = "reading the answer";
      http::async_read(stream_, buffer_, parser_,
                       [this](beast::error_code ec2, std::size_t) { Finish(ec2); });
    });
  }
  void Finish(beast::error_code ec) {
    ec_ = ec;
    finished_ = true;
  }

  Stream& stream_;
  tcp::resolver& resolver_;
  const HttpUrl& url_;
  Request& request_;
  beast::flat_buffer buffer_;
  http::response_parser<http::string_body> parser_;
  beast::error_code ec_;
  const char* stage_ = "resolving";
  bool finished_ = false;
};

// Runs the exchange until it ends or the deadline passes; then aborts it.
template <class Stream>
Status Run(boost::asio::io_context& io, Stream& stream, tcp::resolver& resolver, const HttpUrl& url,
           Request& request, const ChannelSettings& settings) {
  Exchange<Stream> exchange(stream, resolver, url, request);
  exchange.Start();
  io.run_for(std::chrono::milliseconds(settings.timeout_ms));
  if (!exchange.finished()) {
    const std::string stage = exchange.stage();
    resolver.cancel();
    beast::error_code ignored;
    beast::get_lowest_layer(stream).socket().close(ignored);
    io.restart();
    io.run();  // the aborted handlers run here, before the exchange goes away
    return Status::Error(fmt::format("webhook {}: no answer within {} ms ({})", settings.url,
                                     settings.timeout_ms, stage));
  }
  beast::error_code ignored;
  beast::get_lowest_layer(stream).socket().shutdown(tcp::socket::shutdown_both, ignored);
  if (const beast::error_code& ec = exchange.error()) {
    std::string why = ec.message();
    if constexpr (std::is_same_v<Stream, TlsStream>) {
      if (std::string_view(exchange.stage()) == "TLS handshake") {
        why = DescribeHandshakeFailure(stream.native_handle(), ec, settings.tls.ca_file);
      }
    }
    return Status::Error(fmt::format("webhook {}: {}: {}", settings.url, exchange.stage(), why));
  }
  const unsigned code = exchange.status();
  if (code >= 200 && code < 300) return Status::Ok();
  return Status::Error(fmt::format("webhook {}: HTTP {}", settings.url, code));
}

}  // namespace

Status ParseHttpUrl(const std::string& url, HttpUrl* out) {
  std::string rest;
  if (url.rfind("https://", 0) == 0) {
    out->tls = true;
    out->port = "443";
    rest = url.substr(8);
  } else if (url.rfind("http://", 0) == 0) {
    out->tls = false;
    out->port = "80";
    rest = url.substr(7);
  } else {
    return Status::Error("not an http:// or https:// URL: " + url);
  }
  const std::size_t slash = rest.find('/');
  std::string authority = rest.substr(0, slash);
  out->target = slash == std::string::npos ? "/" : rest.substr(slash);
  if (authority.empty()) return Status::Error("no host in URL: " + url);
  // A literal IPv6 address is bracketed (RFC 3986 §3.2.2): "[::1]:8443".
  const std::size_t close = authority.front() == '[' ? authority.find(']') : 0;
  if (close == std::string::npos) return Status::Error("bad host or port in " + url);
  const std::size_t colon = authority.find(':', close);
  if (colon != std::string::npos &&
      (close > 0 || authority.find(':', colon + 1) == std::string::npos)) {
    out->port = authority.substr(colon + 1);
    authority.resize(colon);
  }
  if (close > 0) {
    if (authority.size() != close + 1) return Status::Error("bad host or port in " + url);
    authority = authority.substr(1, close - 1);
  }
  out->host = authority;
  if (out->host.empty() || out->port.empty()) return Status::Error("bad host or port in " + url);
  return Status::Ok();
}

WebhookChannel::WebhookChannel(ChannelSettings settings) : settings_(std::move(settings)) {}
WebhookChannel::~WebhookChannel() = default;

Status WebhookChannel::Deliver(const OutboxItem& item) {
  HttpUrl url;
  if (Status s = ParseHttpUrl(settings_.url, &url); !s.ok()) return s;
  Request request{http::verb::post, url.target, 11};
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
  try {
    boost::asio::io_context io;
    tcp::resolver resolver(io);
    if (!url.tls) {
      beast::tcp_stream stream(io);
      return Run(io, stream, resolver, url, request, settings_);
    }
    if (tls_ == nullptr) {
      if (Status s = MakeTlsClientContext(settings_.tls.ca_file, &tls_); !s.ok()) {
        return Status::Error(fmt::format("webhook {}: {}", settings_.url, s.message()));
      }
    }
    TlsStream stream(io, *tls_);
    if (Status s = ExpectServerName(stream.native_handle(), url.host); !s.ok()) {
      return Status::Error(fmt::format("webhook {}: {}", settings_.url, s.message()));
    }
    return Run(io, stream, resolver, url, request, settings_);
  } catch (const std::exception& e) {
    return Status::Error(fmt::format("webhook {}: {}", settings_.url, e.what()));
  }
}

}  // namespace heft
