// feed_session.h — one TCP connection carrying a native-format feed.
//
// Owns the socket, a fixed read buffer and the connection's IngestSource.
// Created and owned by IngestServer; runs on the daemon's single io_context
// thread and is kept alive by shared_ptr while its read is pending.
//
//   Start() ──▶ async_read_some ──bytes──▶ IngestSource::Feed ──┐
//                    ▲                                         │
//                    └─────────────────────────────────────────┘
//                    │ EOF or read error
//                    ▼
//               Finish ingest, log a one-line summary, Owner::OnSessionEnded
//
//   Stop() (daemon shutting down): Finish ingest first (so the last records
//   count), log the summary, close the socket. The pending read then completes
//   with operation_aborted, which means "stopping", not an error.
#pragma once

#include <chrono>
#include <cstddef>
#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include <boost/asio/ip/tcp.hpp>

#include "ingest_source.h"

namespace heft {

class FeedSession : public std::enable_shared_from_this<FeedSession> {
 public:
  // Told when a session ends by itself (peer closed, read error).
  class Owner {
   public:
    virtual ~Owner() = default;
    virtual void OnSessionEnded(const std::shared_ptr<FeedSession>& session) = 0;
  };

  static constexpr std::size_t kReadBufferBytes = 64 * 1024;

  // `owner` is borrowed and must outlive the session's pending operations.
  FeedSession(boost::asio::ip::tcp::socket socket, std::unique_ptr<IngestSource> source,
              Owner& owner);
  FeedSession(const FeedSession&) = delete;
  FeedSession& operator=(const FeedSession&) = delete;

  void Start();
  // Ends the session from our side. Idempotent; does not call the Owner.
  void Stop();

  const std::string& name() const { return source_->name(); }

 private:
  void DoRead();
  void OnRead(const boost::system::error_code& ec, std::size_t bytes);
  // Finishes the ingest and logs the summary; `why` says how the session ended.
  void End(std::string_view why);

  boost::asio::ip::tcp::socket socket_;
  std::unique_ptr<IngestSource> source_;
  Owner& owner_;
  std::vector<char> buffer_;  // kReadBufferBytes, allocated once
  bool ended_ = false;
  std::int64_t bytes_read_ = 0;
  std::chrono::steady_clock::time_point started_;
};

}  // namespace heft
