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
//
// Snapshots of the live state are taken on the daemon's io thread (cheap);
// database reads run on one worker thread with its own read-only connection
// (io/history_queries.h), and the reply is posted back to the io thread, so a
// slow query never blocks ingest. Not thread-safe: call Handle() on the io
// thread. `engine` and `writer` are borrowed and must outlive this object.
#pragma once

#include <functional>
#include <memory>
#include <string>
#include <string_view>

#include <boost/asio/io_context.hpp>
#include <boost/asio/thread_pool.hpp>

#include "io/config_loader.h"

namespace heft {

class BatchWriter;
class HistoryReader;
class LineEngine;

struct HttpReply {
  int status = 200;
  std::string content_type = "application/json";
  std::string body;
};

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
  // Waits for the worker's current query; later database requests get 503.
  void Stop();

  std::int64_t requests() const { return requests_; }

 private:
  void OnWorker(std::function<HttpReply(HistoryReader&)> job, Done done);
  HttpReply Lines(const std::string& open_json) const;
  HttpReply Metrics() const;

  boost::asio::io_context& io_;
  const LineEngine& engine_;
  const BatchWriter& writer_;
  PlantSettings plant_;
  std::string database_;
  boost::asio::thread_pool worker_{1};
  std::unique_ptr<HistoryReader> reader_;  // used on the worker thread only
  bool stopped_ = false;
  std::int64_t requests_ = 0;
};

}  // namespace heft
