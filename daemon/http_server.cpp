// http_server.cpp — Beast sessions and the acceptor.
#include "http_server.h"

#include <chrono>
#include <optional>
#include <utility>

#include <spdlog/spdlog.h>
#include <boost/beast/core.hpp>
#include <boost/beast/http.hpp>

#include "http_api.h"

namespace heft {

namespace beast = boost::beast;
namespace http = beast::http;
using tcp = boost::asio::ip::tcp;

namespace {
constexpr std::chrono::seconds kIdleTimeout{30};
}  // namespace

class HttpSession : public std::enable_shared_from_this<HttpSession> {
 public:
  HttpSession(tcp::socket socket, HttpApi& api) : stream_(std::move(socket)), api_(api) {}

  void Start() { Read(); }
  void Close() {
    beast::error_code ignored;
    stream_.socket().shutdown(tcp::socket::shutdown_both, ignored);
    stream_.socket().close(ignored);
  }

 private:
  void Read() {
    parser_.emplace();
    parser_->header_limit(HttpServer::kMaxHeaderBytes);
    parser_->body_limit(HttpServer::kMaxBodyBytes);
    stream_.expires_after(kIdleTimeout);
    http::async_read(
        stream_, buffer_, *parser_,
        [self = shared_from_this()](beast::error_code ec, std::size_t) { self->OnRead(ec); });
  }

  void OnRead(beast::error_code ec) {
    if (ec == http::error::body_limit) {
      Write({413, "text/plain; charset=utf-8", "request body too large\n"}, 11, false);
      return;
    }
    if (ec == http::error::header_limit) {
      Write({431, "text/plain; charset=utf-8", "request headers too large\n"}, 11, false);
      return;
    }
    if (ec) {
      Close();  // end of stream, timeout, or a malformed request: just close
      return;
    }
    http::request<http::string_body> request = parser_->release();
    const bool keep_alive = request.keep_alive();
    const unsigned version = request.version();
    head_ = request.method() == http::verb::head;
    HttpRequestParts parts;
    parts.authorization = std::string(request[http::field::authorization]);
    parts.body = std::move(request.body());
    api_.Handle(std::string(request.method_string()), std::string(request.target()), parts,
                [self = shared_from_this(), version, keep_alive](HttpReply reply) {
                  self->Write(std::move(reply), version, keep_alive);
                });
  }

  void Write(HttpReply reply, unsigned version, bool keep_alive) {
    auto response = std::make_shared<http::response<http::string_body>>(
        static_cast<http::status>(reply.status), version);
    response->set(http::field::server, "heftd");
    response->set(http::field::content_type, reply.content_type);
    response->set(http::field::cache_control, "no-store");
    response->set("X-Content-Type-Options", "nosniff");
    for (const auto& [name, value] : reply.headers) response->set(name, value);
    if (reply.content_type.rfind("text/html", 0) == 0) {
      // Inline style and script only; the page talks to this server alone.
      response->set("Content-Security-Policy",
                    "default-src 'none'; style-src 'unsafe-inline'; script-src 'unsafe-inline'; "
                    "connect-src 'self'; img-src 'self' data:");
    }
    response->keep_alive(keep_alive);
    response->body() = std::move(reply.body);
    response->prepare_payload();
    if (head_) response->body().clear();  // Content-Length stays that of the full body
    stream_.expires_after(kIdleTimeout);
    http::async_write(stream_, *response,
                      [self = shared_from_this(), response](beast::error_code ec, std::size_t) {
                        if (ec || !response->keep_alive()) {
                          self->Close();
                          return;
                        }
                        self->buffer_.consume(self->buffer_.size());
                        self->Read();
                      });
  }

  beast::tcp_stream stream_;
  beast::flat_buffer buffer_{HttpServer::kMaxHeaderBytes + HttpServer::kMaxBodyBytes};
  std::optional<http::request_parser<http::string_body>> parser_;
  HttpApi& api_;
  bool head_ = false;
};

HttpServer::HttpServer(boost::asio::io_context& io, HttpApi& api)
    : io_(io), api_(api), acceptor_(io) {}

HttpServer::~HttpServer() { Stop(); }

Status HttpServer::Listen(const std::string& address, int port) {
  boost::system::error_code ec;
  const auto ip = boost::asio::ip::make_address(address, ec);
  if (ec) return Status::Error("http.address '" + address + "' is not an IP address");
  const tcp::endpoint endpoint(ip, static_cast<unsigned short>(port));
  acceptor_.open(endpoint.protocol(), ec);
  if (!ec) acceptor_.set_option(tcp::acceptor::reuse_address(true), ec);
  if (!ec) acceptor_.bind(endpoint, ec);
  if (!ec) acceptor_.listen(boost::asio::socket_base::max_listen_connections, ec);
  if (ec) {
    return Status::Error("cannot listen for HTTP on " + address + ":" + std::to_string(port) +
                         ": " + ec.message());
  }
  Accept();
  return Status::Ok();
}

tcp::endpoint HttpServer::local_endpoint() const {
  boost::system::error_code ec;
  return acceptor_.local_endpoint(ec);
}

void HttpServer::Accept() {
  acceptor_.async_accept([this](boost::system::error_code ec, tcp::socket socket) {
    if (stopped_ || ec == boost::asio::error::operation_aborted) return;
    if (!ec) {
      std::erase_if(sessions_, [](const std::weak_ptr<HttpSession>& s) { return s.expired(); });
      if (sessions_.size() >= kMaxConnections) {
        spdlog::warn("http: refusing a connection: {} already open", sessions_.size());
        boost::system::error_code ignored;
        socket.close(ignored);
      } else {
        auto session = std::make_shared<HttpSession>(std::move(socket), api_);
        sessions_.push_back(session);
        session->Start();
      }
    } else {
      spdlog::warn("http: accept failed: {}", ec.message());
    }
    Accept();
  });
}

void HttpServer::Stop() {
  if (stopped_) return;
  stopped_ = true;
  boost::system::error_code ignored;
  acceptor_.close(ignored);
  for (auto& weak : sessions_) {
    if (auto session = weak.lock()) session->Close();
  }
  sessions_.clear();
}

}  // namespace heft
