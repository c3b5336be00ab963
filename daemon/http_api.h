// http_api.h — what heftd's HTTP server answers: the JSON API, Prometheus
// metrics, the health check and the live floor page.
//
//   GET /                      live page (live_page.h)
//   GET /healthz               "ok" (200) or "storage failing" (503)
//   GET /metrics               Prometheus text format 0.0.4
//   GET /api/lines             every line's state (Plant snapshot + open events)
//   GET /api/stats?line=L[&last=N]    rolling figures of the newest N stored packs
//   GET /api/events?line=L&since=T[&limit=N]
//   GET /api/lots[?line=L]     the newest 200 stored lots with their verdicts
//   GET /api/samples?line=L&last=N    newest N packs, oldest first (for charts)
//   GET /api/alarms            current alarm states (the alarm_state table)
//   GET /api/alarms/requests/N the outcome of operator request N
//   POST /api/alarms/ID/ack|shelve|unshelve   operator actions, only when a
//       token is configured (else 404) and sent as `Authorization: Bearer T`
//       (else 401); queued as an alarm_requests row exactly like `heft ack`,
//       applied by heftd on its next tick; answers 202 with the request id.
//
// Snapshots of the live state are taken on the daemon's io thread (cheap);
// database reads run on one worker thread with its own read-only connection
// (io/history_queries.h), and the reply is posted back to the io thread, so a
// slow query never blocks ingest. Not thread-safe: call Handle() on the io
// thread. `engine` and `writer` are borrowed and must outlive this object.
// Operator requests are written on the same worker thread through its own
// read-write AlarmStore connection, so the io thread never waits on SQLite.
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include <boost/asio/io_context.hpp>
#include <boost/asio/thread_pool.hpp>

#include "io/config_loader.h"

namespace heft {

class AlarmStore;
class BatchWriter;
class HistoryReader;
class LineEngine;

struct HttpReply {
  int status = 200;
  std::string content_type = "application/json";
  std::string body;
  std::vector<std::pair<std::string, std::string>> headers = {};  // extra response headers
};

// What HttpApi needs of a request besides method and target.
struct HttpRequestParts {
  std::string authorization;  // the Authorization header, as sent
  std::string body;
};

// True when `authorization` is "Bearer <token>" (scheme case-insensitive) and
// the token equals `expected`. Constant time in the sent token's content: no
// early exit on the first differing byte, lengths compared without a branch
// on the secret's bytes. An empty `expected` never matches.
bool BearerTokenMatches(std::string_view authorization, std::string_view expected);

class HttpApi {
 public:
  HttpApi(boost::asio::io_context& io, const LineEngine& engine, const BatchWriter& writer,
          PlantSettings plant, std::string database);
  ~HttpApi();
  HttpApi(const HttpApi&) = delete;
  HttpApi& operator=(const HttpApi&) = delete;

  using Done = std::function<void(HttpReply)>;
  // Answers `target` (path and query). `done` runs on the io thread, now or later.
  void Handle(std::string_view method, std::string_view target, Done done);
  void Handle(std::string_view method, std::string_view target, const HttpRequestParts& parts,
              Done done);
  // The operator token (config `http.token`); empty = no operator actions.
  void SetOperatorToken(std::string token) { token_ = std::move(token); }
  // Request bodies of the operator actions above this size get 413.
  static constexpr std::size_t kMaxActionBodyBytes = 4 * 1024;
  // Waits for the worker's current query; later database requests get 503.
  void Stop();

  std::int64_t requests() const { return requests_; }

 private:
  void OnWorker(std::function<HttpReply(HistoryReader&)> job, Done done);
  void OnAlarmWorker(std::function<HttpReply(AlarmStore&)> job, Done done);
  void AlarmAction(const std::string& path, const HttpRequestParts& parts, Done done);
  HttpReply Lines(const std::string& open_json) const;
  HttpReply Metrics() const;

  boost::asio::io_context& io_;
  const LineEngine& engine_;
  const BatchWriter& writer_;
  PlantSettings plant_;
  std::string database_;
  boost::asio::thread_pool worker_{1};
  std::unique_ptr<HistoryReader> reader_;  // used on the worker thread only
  std::unique_ptr<AlarmStore> alarms_;     // read-write; used on the worker thread only
  std::string token_;
  bool stopped_ = false;
  std::int64_t requests_ = 0;
  std::int64_t auth_failures_ = 0;
};

}  // namespace heft
