// tcp_connect_source.h — a `tcp-connect` source: heftd connects to a device
// or gateway and reads its feed; when the connection fails or drops, it
// reconnects with exponential backoff and jitter (backoff.h).
//
//   Start ─▶ resolve ─▶ connect (connect_timeout_ms) ─ok─▶ read ... ─EOF/error─┐
//              ▲                        │ fail                                 │
//              └──── retry timer ◀──────┴──────────────────────────────────────┘
//                    (max_attempts consecutive failures → "failed", no more tries)
//
// States are logged as `source NAME: state connected|retrying|failed ...`.
// TCP keepalive (keepalive_s) lets a dead peer be noticed on a quiet line.
// One IngestSource for the source's life, so record indexes run on across
// reconnects; a record cut off by a drop is counted as `truncated`. What a
// drop may lose: bytes the peer sent that had not reached us (in flight or
// in its buffers) — TCP offers no acknowledgement of what the application
// read, so a device that does not resend loses them. Nothing is read twice.
// Not thread-safe: io_context thread only.
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/steady_timer.hpp>

#include "backoff.h"
#include "core/record/record_format.h"
#include "feed_source.h"
#include "ingest_source.h"
#include "io/source_settings.h"

namespace heft {

class LineEngine;

class TcpConnectSource final : public FeedSource {
 public:
  TcpConnectSource(boost::asio::io_context& io, LineEngine& engine, SourceSettings settings,
                   std::unique_ptr<RecordFormat> format);

  Status Start() override;
  void Stop() override;
  const std::string& name() const override { return settings_.name; }

  enum class State { kConnecting, kConnected, kRetrying, kFailed, kStopped };
  State state() const { return state_; }

 private:
  void Resolve();
  void Connect(const boost::asio::ip::tcp::resolver::results_type& endpoints);
  void OnConnected(const boost::asio::ip::tcp::endpoint& endpoint);
  void DoRead();
  void Retry(const std::string& why);
  void SetKeepalive();

  SourceSettings settings_;
  boost::asio::ip::tcp::resolver resolver_;
  boost::asio::ip::tcp::socket socket_;
  boost::asio::steady_timer timer_;  // connect deadline, then retry wait
  std::unique_ptr<IngestSource> ingest_;
  Backoff backoff_;
  std::vector<char> buffer_;
  State state_ = State::kConnecting;
  bool timed_out_ = false;
  std::uint64_t generation_ = 0;  // bumps per attempt: stale handlers do nothing
  std::string peer_;
};

}  // namespace heft
