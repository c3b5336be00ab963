#include "ingest_server.h"

#include <chrono>
#include <string>
#include <utility>

#include <fmt/format.h>
#include <spdlog/spdlog.h>
#include <boost/asio/error.hpp>

#include "line_engine.h"

namespace heft {
namespace {
constexpr std::chrono::milliseconds kAcceptRetryDelay{200};

std::string EndpointText(const boost::asio::ip::tcp::endpoint& endpoint) {
  const auto address = endpoint.address();
  if (address.is_v6()) return fmt::format("[{}]:{}", address.to_string(), endpoint.port());
  return fmt::format("{}:{}", address.to_string(), endpoint.port());
}
}  // namespace

IngestServer::IngestServer(boost::asio::io_context& io, LineEngine& engine, int max_connections)
    : acceptor_(io),
      retry_timer_(io),
      engine_(engine),
      max_connections_(max_connections > 0 ? static_cast<std::size_t>(max_connections) : 1) {}

void IngestServer::Configure(std::string name, PeerAllowList allow,
                             std::unique_ptr<RecordFormat> format, std::size_t max_record) {
  limit_key_ = "sources[" + name + "].max_connections";
  name_ = std::move(name);
  allow_ = std::move(allow);
  format_ = std::move(format);
  max_record_ = max_record;
}

Status IngestServer::Listen(const std::string& address, int port) {
  namespace ip = boost::asio::ip;
  const std::string where = fmt::format("{}:{}", address, port);
  boost::system::error_code ec;
  const ip::address bind_address = ip::make_address(address, ec);
  if (ec) return Status::Error(fmt::format("cannot listen on {}: not an IP address", where));
  if (port < 0 || port > 65535) {
    return Status::Error(fmt::format("cannot listen on {}: port out of range 0..65535", where));
  }
  const ip::tcp::endpoint endpoint(bind_address, static_cast<unsigned short>(port));
  acceptor_.open(endpoint.protocol(), ec);
  if (!ec) acceptor_.set_option(ip::tcp::acceptor::reuse_address(true), ec);
  if (!ec) acceptor_.bind(endpoint, ec);
  if (!ec) acceptor_.listen(boost::asio::socket_base::max_listen_connections, ec);
  if (ec) {
    boost::system::error_code ignored;
    acceptor_.close(ignored);
    return Status::Error(fmt::format("cannot listen on {}: {}", where, ec.message()));
  }
  DoAccept();
  return Status::Ok();
}

boost::asio::ip::tcp::endpoint IngestServer::local_endpoint() const {
  boost::system::error_code ec;
  return acceptor_.local_endpoint(ec);
}

void IngestServer::DoAccept() {
  acceptor_.async_accept(
      [this](const boost::system::error_code& ec, boost::asio::ip::tcp::socket socket) {
        OnAccept(ec, std::move(socket));
      });
}

void IngestServer::OnAccept(const boost::system::error_code& ec,
                            boost::asio::ip::tcp::socket socket) {
  if (stopping_ || !acceptor_.is_open()) return;  // closed by Stop()
  if (ec) {
    if (ec == boost::asio::error::operation_aborted) return;
    // E.g. out of file descriptors: log, back off, try again.
    spdlog::error("accept failed: {}; retrying in {} ms", ec.message(), kAcceptRetryDelay.count());
    retry_timer_.expires_after(kAcceptRetryDelay);
    retry_timer_.async_wait([this](const boost::system::error_code& timer_ec) {
      if (!timer_ec && !stopping_) DoAccept();
    });
    return;
  }
  boost::system::error_code peer_ec;
  const auto peer = socket.remote_endpoint(peer_ec);
  const std::string source = name_ + ":" + (peer_ec ? std::string("unknown") : EndpointText(peer));
  if (!allow_.empty() && (peer_ec || !allow_.Allows(peer.address()))) {
    ++refused_;
    spdlog::warn("refusing connection {}: peer address not in the allow list", source);
    boost::system::error_code ignored;
    socket.close(ignored);
  } else if (sessions_.size() >= max_connections_) {
    ++refused_;
    spdlog::warn("refusing connection {}: {} feed connections already open ({})", source,
                 sessions_.size(), limit_key_);
    boost::system::error_code ignored;
    socket.close(ignored);
  } else {
    std::unique_ptr<IngestSource> ingest = engine_.OpenSource(source);
    if (format_) ingest->UseFormat(format_->Clone(), max_record_);
    auto session = std::make_shared<FeedSession>(std::move(socket), std::move(ingest), *this);
    sessions_.insert(session);
    spdlog::info("session {} opened ({} open)", source, sessions_.size());
    session->Start();
  }
  DoAccept();
}

void IngestServer::OnSessionEnded(const std::shared_ptr<FeedSession>& session) {
  sessions_.erase(session);
}

void IngestServer::Stop() {
  if (stopping_) return;
  stopping_ = true;
  boost::system::error_code ignored;
  acceptor_.close(ignored);
  retry_timer_.cancel();
  // Stop in a copy's order: Stop() never calls back into OnSessionEnded.
  auto sessions = std::move(sessions_);
  sessions_.clear();
  for (const auto& session : sessions) session->Stop();
}

}  // namespace heft
