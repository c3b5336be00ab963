// delivery_worker.h — one thread per delivery channel that drains the
// channel's rows of the SQLite outbox (alarm_outbox), in order.
//
// Why a thread per channel rather than async I/O on heftd's io_context: the
// MQTT client library and fork/exec of a hook are blocking APIs, and a slow
// web server or a broker that is down must not delay ingest nor the other
// channels. Each worker has its own SQLite connection (WAL lets it update the
// outbox while heftd writes). A row is retried with doubling delays
// (retry_min_ms .. retry_max_ms) until the channel acknowledges it or it
// expires; rows after a failing one wait, so receivers see them in order.
//
// Thread-safety: Start/Wake/Stop and the counters may be called from any
// thread; `log` is called on the worker thread (heftd posts it to its loop).
#pragma once

#include <atomic>
#include <condition_variable>
#include <cstdint>
#include <functional>
#include <memory>
#include <mutex>
#include <string>
#include <thread>

#include "io/alerting_settings.h"
#include "io/notify/channel.h"

namespace heft {

class DeliveryWorker {
 public:
  enum class LogLevel { kInfo, kWarn };
  using LogFn = std::function<void(LogLevel level, std::string message)>;
  using NowFn = std::function<std::int64_t()>;  // wall clock, ms since the epoch

  DeliveryWorker(std::string db_path, std::string channel_name, OutboxSettings outbox,
                 std::unique_ptr<Channel> channel, LogFn log, NowFn now);
  ~DeliveryWorker();
  DeliveryWorker(const DeliveryWorker&) = delete;
  DeliveryWorker& operator=(const DeliveryWorker&) = delete;

  Status Start();
  void Wake();  // new rows were recorded
  // Stops after the delivery in progress (at most about one channel timeout),
  // closes the channel (MQTT: "offline"), joins. Undelivered rows stay in the
  // outbox for the next start.
  void Stop();

  std::int64_t delivered() const { return delivered_; }
  std::int64_t failures() const { return failures_; }
  const std::string& name() const { return name_; }

 private:
  void Run();
  // Delivers what is due; returns the wall time of the next row's retry (or
  // 0 when nothing waits).
  std::int64_t Drain();

  std::string db_path_;
  std::string name_;
  OutboxSettings outbox_;
  std::unique_ptr<Channel> channel_;
  LogFn log_;
  NowFn now_;
  std::unique_ptr<AlarmStore> store_;
  std::thread thread_;
  std::mutex mutex_;
  std::condition_variable cv_;
  bool wake_ = false;
  bool stop_ = false;
  bool failing_ = false;
  std::atomic<std::int64_t> delivered_{0};
  std::atomic<std::int64_t> failures_{0};
};

}  // namespace heft
