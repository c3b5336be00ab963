// ingest_server.h — the TCP listener for native-format feeds and the set of
// live FeedSessions.
//
// Accepts connections on the configured address (127.0.0.1 by default), gives
// each one a FeedSession with its own IngestSource named
// "tcp:PEER_IP:PEER_PORT", and refuses (closes, with a log line) connections
// beyond `max_connections`. Stop() closes the acceptor and stops every session
// (each finishes its ingest first); once their cancelled reads complete, no
// work is left and io_context::run() can return.
//
// Not thread-safe: io_context thread only. `io` and `engine` are borrowed and
// must outlive the server.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <set>
#include <string>
#include <utility>

#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/steady_timer.hpp>

#include "core/model/status.h"
#include "core/record/line_framer.h"
#include "core/record/record_format.h"
#include "io/peer_allow_list.h"
#include "feed_session.h"

namespace heft {

class LineEngine;

class IngestServer final : public FeedSession::Owner {
 public:
  IngestServer(boost::asio::io_context& io, LineEngine& engine, int max_connections);
  IngestServer(const IngestServer&) = delete;
  IngestServer& operator=(const IngestServer&) = delete;

  // A configured tcp-listen source (config `sources:`): sessions are named
  // "NAME:PEER_IP:PEER_PORT", peers outside `allow` are refused, and each
  // session reads with a clone of `format` (null: native) framed at
  // `max_record` bytes. REQUIRES: before Listen().
  void Configure(std::string name, PeerAllowList allow, std::unique_ptr<RecordFormat> format,
                 std::size_t max_record);

  // Binds, listens and starts accepting. Port 0 asks the OS for a free port
  // (see local_endpoint()). Errors say which address and why.
  Status Listen(const std::string& address, int port);
  boost::asio::ip::tcp::endpoint local_endpoint() const;

  // Closes the acceptor and stops all sessions. Idempotent.
  void Stop();

  std::size_t session_count() const { return sessions_.size(); }
  std::int64_t connections_refused() const { return refused_; }

  void OnSessionEnded(const std::shared_ptr<FeedSession>& session) override;

 private:
  void DoAccept();
  void OnAccept(const boost::system::error_code& ec, boost::asio::ip::tcp::socket socket);

  boost::asio::ip::tcp::acceptor acceptor_;
  boost::asio::steady_timer retry_timer_;  // backs off after an accept error (e.g. EMFILE)
  LineEngine& engine_;
  std::size_t max_connections_;
  std::string name_ = "tcp";   // session name prefix; "tcp" for the `listen:` block
  std::string limit_key_ = "listen.max_connections";  // named in refusal log lines
  PeerAllowList allow_;        // empty: any peer
  std::unique_ptr<RecordFormat> format_;  // prototype per session; null: native
  std::size_t max_record_ = LineFramer::kDefaultMaxRecord;
  std::set<std::shared_ptr<FeedSession>> sessions_;
  bool stopping_ = false;
  std::int64_t refused_ = 0;
};

}  // namespace heft
