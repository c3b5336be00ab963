// http_server.h — heftd's HTTP/1.1 server (Boost.Beast, async on the daemon's
// io_context): accepts connections on the configured address (127.0.0.1 by
// default), reads one request at a time per connection with bounded sizes
// (headers 8 KiB, body 16 KiB) and a 30 s idle timeout, and hands each request
// to HttpApi. At most kMaxConnections at once; more are closed at once.
//
// Nothing here blocks: reads and writes are async, and HttpApi runs database
// reads on its own worker thread. Not thread-safe: lives on the io thread.
// `api` is borrowed and must outlive the server.
#pragma once

#include <cstddef>
#include <memory>
#include <string>
#include <vector>

#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>

#include "core/model/status.h"

namespace heft {

class HttpApi;
class HttpSession;

class HttpServer {
 public:
  static constexpr std::size_t kMaxConnections = 32;
  static constexpr std::size_t kMaxHeaderBytes = 8 * 1024;
  static constexpr std::size_t kMaxBodyBytes = 16 * 1024;

  HttpServer(boost::asio::io_context& io, HttpApi& api);
  ~HttpServer();
  HttpServer(const HttpServer&) = delete;
  HttpServer& operator=(const HttpServer&) = delete;

  // Binds and starts accepting. Port 0 = any free port (see local_endpoint()).
  Status Listen(const std::string& address, int port);
  // Stops accepting and closes every open connection.
  void Stop();
  boost::asio::ip::tcp::endpoint local_endpoint() const;

 private:
  void Accept();

  boost::asio::io_context& io_;
  HttpApi& api_;
  boost::asio::ip::tcp::acceptor acceptor_;
  std::vector<std::weak_ptr<HttpSession>> sessions_;
  bool stopped_ = false;
};

}  // namespace heft
