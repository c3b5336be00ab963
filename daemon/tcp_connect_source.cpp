#include "tcp_connect_source.h"

#include <netinet/in.h>
#include <netinet/tcp.h>
#include <sys/socket.h>

#include <algorithm>
#include <chrono>
#include <utility>

#include <fmt/format.h>
#include <spdlog/spdlog.h>
#include <boost/asio/connect.hpp>
#include <boost/asio/error.hpp>

#include "line_engine.h"

namespace heft {
namespace {
constexpr std::size_t kReadBufferBytes = 64 * 1024;
}  // namespace

TcpConnectSource::TcpConnectSource(boost::asio::io_context& io, LineEngine& engine,
                                   SourceSettings settings, std::unique_ptr<RecordFormat> format)
    : settings_(std::move(settings)),
      resolver_(io),
      socket_(io),
      timer_(io),
      ingest_(engine.OpenSource(settings_.name)),
      backoff_(std::chrono::milliseconds(settings_.retry_initial_ms),
               std::chrono::milliseconds(settings_.retry_max_ms)),
      buffer_(kReadBufferBytes) {
  ingest_->UseFormat(std::move(format), settings_.max_record_bytes);
}

Status TcpConnectSource::Start() {
  spdlog::info("source {}: tcp-connect to {}:{}", name(), settings_.host, settings_.port);
  Resolve();
  return Status::Ok();
}

void TcpConnectSource::Resolve() {
  state_ = State::kConnecting;
  const std::uint64_t generation = ++generation_;
  resolver_.async_resolve(settings_.host, std::to_string(settings_.port),
                          [this, generation](const boost::system::error_code& ec,
                                             boost::asio::ip::tcp::resolver::results_type results) {
                            if (generation != generation_ || state_ == State::kStopped) return;
                            if (ec) {
                              Retry("cannot resolve " + settings_.host + ": " + ec.message());
                              return;
                            }
                            Connect(results);
                          });
}

void TcpConnectSource::Connect(const boost::asio::ip::tcp::resolver::results_type& endpoints) {
  const std::uint64_t generation = generation_;
  timed_out_ = false;
  timer_.expires_after(std::chrono::milliseconds(settings_.connect_timeout_ms));
  timer_.async_wait([this, generation](const boost::system::error_code& ec) {
    if (ec || generation != generation_ || state_ != State::kConnecting) return;
    timed_out_ = true;
    boost::system::error_code ignored;
    socket_.close(ignored);  // the connect completes with operation_aborted
  });
  boost::asio::async_connect(
      socket_, endpoints,
      [this, generation](const boost::system::error_code& ec,
                         const boost::asio::ip::tcp::endpoint& endpoint) {
        if (generation != generation_ || state_ == State::kStopped) return;
        timer_.cancel();
        if (timed_out_) {
          Retry(fmt::format("connect timed out after {} ms", settings_.connect_timeout_ms));
        } else if (ec) {
          Retry("connect failed: " + ec.message());
        } else {
          OnConnected(endpoint);
        }
      });
}

void TcpConnectSource::SetKeepalive() {
  boost::system::error_code ec;
  socket_.set_option(boost::asio::socket_base::keep_alive(settings_.keepalive_s > 0), ec);
  if (settings_.keepalive_s <= 0 || ec) return;
  // Linux knobs: first probe after keepalive_s of silence, then every third
  // of that, 3 probes: a dead peer is noticed after about 2 x keepalive_s.
  const int fd = socket_.native_handle();
  const int idle = settings_.keepalive_s;
  const int interval = std::max(1, settings_.keepalive_s / 3);
  const int count = 3;
  ::setsockopt(fd, IPPROTO_TCP, TCP_KEEPIDLE, &idle, sizeof idle);
  ::setsockopt(fd, IPPROTO_TCP, TCP_KEEPINTVL, &interval, sizeof interval);
  ::setsockopt(fd, IPPROTO_TCP, TCP_KEEPCNT, &count, sizeof count);
}

void TcpConnectSource::OnConnected(const boost::asio::ip::tcp::endpoint& endpoint) {
  state_ = State::kConnected;
  backoff_.Reset();
  SetKeepalive();
  peer_ = fmt::format("{}:{}", endpoint.address().to_string(), endpoint.port());
  spdlog::info("source {}: state connected to {}", name(), peer_);
  DoRead();
}

void TcpConnectSource::DoRead() {
  const std::uint64_t generation = generation_;
  socket_.async_read_some(boost::asio::buffer(buffer_), [this, generation](
                                                            const boost::system::error_code& ec,
                                                            std::size_t bytes) {
    if (generation != generation_ || state_ != State::kConnected) return;
    if (bytes > 0) ingest_->Feed(std::string_view(buffer_.data(), bytes));
    if (!ec) {
      DoRead();
      return;
    }
    // The stream is cut: a half-received record must not pass as whole.
    ingest_->Restart();
    const IngestCounters& c = ingest_->counters();
    spdlog::info(
        "source {}: connection to {} ended ({}); {} records so far: {} accepted, {} "
        "malformed",
        name(), peer_, ec == boost::asio::error::eof ? std::string("closed by peer") : ec.message(),
        c.records, c.accepted, c.malformed);
    Retry("connection lost");
  });
}

void TcpConnectSource::Retry(const std::string& why) {
  boost::system::error_code ignored;
  socket_.close(ignored);
  ++generation_;
  const int failures = backoff_.attempts() + 1;  // consecutive, this one included
  if (settings_.max_attempts > 0 && failures >= settings_.max_attempts) {
    state_ = State::kFailed;
    spdlog::error(
        "source {}: state failed: {} ({} failed attempts in a row; max_attempts "
        "reached, no more tries)",
        name(), why, failures);
    return;
  }
  state_ = State::kRetrying;
  const auto delay = backoff_.Next();
  spdlog::warn("source {}: state retrying in {} ms (attempt {}): {}", name(), delay.count(),
               backoff_.attempts(), why);
  const std::uint64_t generation = generation_;
  timer_.expires_after(delay);
  timer_.async_wait([this, generation](const boost::system::error_code& ec) {
    if (ec || generation != generation_ || state_ != State::kRetrying) return;
    Resolve();
  });
}

void TcpConnectSource::Stop() {
  if (state_ == State::kStopped) return;
  state_ = State::kStopped;
  ++generation_;
  resolver_.cancel();
  timer_.cancel();
  boost::system::error_code ignored;
  socket_.shutdown(boost::asio::ip::tcp::socket::shutdown_both, ignored);
  socket_.close(ignored);
  ingest_->Finish();
  const IngestCounters& c = ingest_->counters();
  spdlog::info("source {} stopped: {} records: {} accepted, {} malformed, {} refused", name(),
               c.records, c.accepted, c.malformed, c.refused);
}

}  // namespace heft
