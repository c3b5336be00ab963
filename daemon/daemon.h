// daemon.h — heftd's wiring: store, batch writer, line engine, ingest server,
// housekeeping tick and signals on one io_context.
//
// Used by main.cpp only. Start() does every step that can fail on a bad setup
// (open the database, register the configured lines, bind the port) before
// logging `listening on ADDRESS:PORT`, so a supervisor sees startup errors at
// once. Run() drives the loop on the calling thread until shutdown is done.
//
// Shutdown (SIGINT or SIGTERM), in stages:
//   1. close the acceptor and stop every session (each finishes its ingest,
//      so the last records and their findings count);
//   2. write the last batch synchronously and save every line's checkpoint
//      (checkpoint_keeper.h): open lots and open findings continue at the next
//      start; only if the checkpoint cannot be saved are open lots closed as
//      partial;
//   3. close the database;
//   4. log a summary; run() returns because no work is left.
// A second signal during shutdown exits at once with status 1.
//
// Service manager (sd_notifier.h): READY=1 once the database is open and the
// ports are bound; STATUS= every few seconds (records/s); WATCHDOG=1 from the
// tick when $WATCHDOG_USEC is set; STOPPING=1 at shutdown. SIGHUP reloads the
// config (Reload()) between RELOADING=1 and READY=1.
//
// Not thread-safe: everything runs on the thread that calls Run(). `clock` is
// borrowed and must outlive the Daemon.
#pragma once

#include <chrono>
#include <memory>
#include <string>
#include <string_view>

#include <boost/asio/io_context.hpp>
#include <boost/asio/signal_set.hpp>
#include <boost/asio/steady_timer.hpp>

#include "core/model/status.h"
#include "io/config_loader.h"
#include "io/store.h"

namespace heft {

class BatchWriter;
class Clock;
class HttpApi;
class HttpServer;
class IngestServer;
class SourceSet;
class LineEngine;
class AlarmService;
class CheckpointKeeper;
class Notifier;

class Daemon {
 public:
  // Housekeeping period and how late a tick may run before we warn.
  static constexpr std::chrono::milliseconds kTickPeriod{1000};
  static constexpr std::chrono::milliseconds kTickLateWarning{1000};

  // How often raw samples older than storage.raw_retention_days are pruned.
  static constexpr std::chrono::minutes kPrunePeriod{60};
  static constexpr std::chrono::minutes kFirstPruneDelay{10};  // after a start
  // STATUS= notifications at most this often.
  static constexpr std::chrono::seconds kStatusPeriod{5};

  // Command-line settings that win over the config file, also on reload.
  struct Overrides {
    std::string database;  // empty = from the config
    int port = -1;         // -1 = from the config
  };

  Daemon(Config config, const Clock& clock);
  ~Daemon();
  Daemon(const Daemon&) = delete;
  Daemon& operator=(const Daemon&) = delete;

  // Opens the database, registers lines, binds the listener, arms the timers
  // and signals. On error returns a one-line reason and leaves nothing running.
  Status Start();
  // Runs until shutdown has completed.
  void Run();
  // Before Start(): the command line's overrides, re-applied on reload.
  void SetOverrides(Overrides overrides) { overrides_ = std::move(overrides); }
  // Before Start(): where READY/STATUS/WATCHDOG go (default: SdNotifier from
  // the environment). Borrowed; must outlive the Daemon.
  void SetNotifier(Notifier* notifier) { notifier_ = notifier; }

 private:
  void OnSignal(const boost::system::error_code& ec, int signal_number);
  void Shutdown(std::string_view why);
  // SIGHUP: re-reads config_.path. A bad file is rejected with every error
  // logged and the running config kept; a good one is applied to the lines
  // (LineEngine::Reconfigure) and to storage.raw_retention_days; other blocks
  // that changed are logged as needing a restart.
  void Reload();
  void ArmSignals();
  // Retention: deletes raw samples older than storage.raw_retention_days.
  void PruneSamples();
  void NotifyStatus(std::string_view prefix);
  // Before opening read-write: when the file's schema is older, logs the upgrade
  // and asks the service manager for time. True when it stretched the watchdog.
  bool AnnounceSchemaUpgrade(const std::string& database);
  void ArmTick();
  // The housekeeping tick. Jobs: (1) warn when the loop stalled (tick late by
  // more than kTickLateWarning); (2) LineEngine::AdvanceClock for silence.
  // Batch writes have their own timer (storage.flush_interval_ms).
  void OnTick(const boost::system::error_code& ec);

  Config config_;
  const Clock& clock_;
  boost::asio::io_context io_;
  std::unique_ptr<Store> store_;         // io thread: lines, retention, checkpoints
  std::unique_ptr<Store> writer_store_;  // the BatchWriter thread's own connection
  std::unique_ptr<BatchWriter> writer_;
  std::unique_ptr<LineEngine> engine_;
  std::unique_ptr<IngestServer> server_;
  std::unique_ptr<HttpApi> http_api_;  // http_api.h; null when http is off
  std::unique_ptr<HttpServer> http_server_;
  std::unique_ptr<SourceSet> sources_;             // the config's `sources:` list (source_set.h)
  std::unique_ptr<AlarmService> alarms_;           // alarm lifecycle and delivery (alarm_service.h)
  std::unique_ptr<CheckpointKeeper> checkpoints_;  // restart state (checkpoint_keeper.h)
  std::chrono::steady_clock::time_point next_checkpoint_{};
  boost::asio::signal_set signals_;
  boost::asio::steady_timer tick_timer_;
  std::chrono::steady_clock::time_point tick_due_;
  bool stopping_ = false;
  Overrides overrides_;
  std::unique_ptr<Notifier> own_notifier_;  // when SetNotifier was not called
  Notifier* notifier_ = nullptr;
  std::chrono::steady_clock::time_point next_prune_{};
  std::chrono::steady_clock::time_point next_status_{};
  std::chrono::steady_clock::time_point status_since_{};
  std::int64_t status_records_ = 0;  // Totals::records at status_since_
  std::int64_t reloads_ = 0;
};

}  // namespace heft
