#include "daemon.h"

#include <pthread.h>
#include <signal.h>
#include <unistd.h>

#include <csignal>
#include <utility>
#include <vector>

#include <fmt/format.h>
#include <spdlog/spdlog.h>

#include "alarm_service.h"
#include "batch_writer.h"
#include "checkpoint_keeper.h"
#include "clock.h"
#include "http_api.h"
#include "http_server.h"
#include "ingest_server.h"
#include "io/sqlite_store.h"
#include "line_engine.h"
#include "sd_notifier.h"
#include "source_set.h"

namespace heft {
namespace {

// Installed after the first signal: a second one ends the process at once.
// Only async-signal-safe calls here.
extern "C" void ExitAtOnce(int) {
  static const char kMessage[] = "heftd: second signal during shutdown; exiting now\n";
  if (::write(STDERR_FILENO, kMessage, sizeof kMessage - 1) < 0) {
  }
  ::_exit(1);
}

void InstallExitAtOnce() {
  struct sigaction action = {};
  action.sa_handler = ExitAtOnce;
  sigemptyset(&action.sa_mask);
  ::sigaction(SIGINT, &action, nullptr);
  ::sigaction(SIGTERM, &action, nullptr);
}

const char* SignalName(int signal_number) {
  switch (signal_number) {
    case SIGINT:
      return "SIGINT";
    case SIGTERM:
      return "SIGTERM";
    case SIGHUP:
      return "SIGHUP";
    default:
      return "signal";
  }
}

}  // namespace

Daemon::Daemon(Config config, const Clock& clock)
    : config_(std::move(config)), clock_(clock), signals_(io_), tick_timer_(io_) {}

Daemon::~Daemon() = default;

// Opening read-write migrates an older file, and version 6 copies every raw
// sample: minutes on a large file. Say so, and ask the service manager for the
// time (start timeout and watchdog; the tick that pings it is not running yet),
// so it does not kill heftd half-way and roll the upgrade back on every restart.
bool Daemon::AnnounceSchemaUpgrade(const std::string& database) {
  std::unique_ptr<SqliteStore> reader;
  if (!SqliteStore::Open(database, SqliteStore::Mode::kReadOnly, &reader).ok()) return false;
  const int version = reader->schema_version();
  reader.reset();
  if (version >= SqliteStore::kSchemaVersion) return false;
  spdlog::info(
      "database {}: upgrading schema {} -> {}; raw samples are copied once, which can take "
      "minutes on a large file",
      database, version, SqliteStore::kSchemaVersion);
  constexpr long long kUpgradeAllowanceUs = 3'600'000'000;  // an hour
  std::string message =
      fmt::format("STATUS=upgrading database schema {} -> {}\nEXTEND_TIMEOUT_USEC={}", version,
                  SqliteStore::kSchemaVersion, kUpgradeAllowanceUs);
  const bool watchdog = notifier_->watchdog_interval().count() > 0;
  if (watchdog) message += fmt::format("\nWATCHDOG=1\nWATCHDOG_USEC={}", kUpgradeAllowanceUs);
  notifier_->Notify(message);
  return watchdog;
}

Status Daemon::Start() {
  if (notifier_ == nullptr) {
    own_notifier_ = std::make_unique<SdNotifier>();
    notifier_ = own_notifier_.get();
  }
  const StorageSettings& storage = config_.storage;
  const bool watchdog_stretched = AnnounceSchemaUpgrade(storage.database);
  std::unique_ptr<SqliteStore> sqlite;
  Status status = SqliteStore::Open(storage.database, SqliteStore::Mode::kReadWrite, &sqlite);
  if (watchdog_stretched) {  // the configured watchdog timeout again
    notifier_->Notify(
        fmt::format("WATCHDOG=1\nWATCHDOG_USEC={}", notifier_->watchdog_interval().count()));
  }
  if (!status.ok()) {
    return Status::Error("cannot open database " + storage.database + ": " + status.message());
  }
  store_ = std::move(sqlite);

  std::vector<LineRow> lines;
  for (const auto& [id, line] : config_.plant.lines) {
    LineRow row;
    row.line = id;
    row.product = line.product;
    row.nominal_g = line.nominal_g;
    row.target_g = line.target_g;
    row.heads = line.heads;
    lines.push_back(std::move(row));
  }
  if (!lines.empty()) {
    status = store_->UpsertLines(lines);
    if (!status.ok()) {
      return Status::Error("cannot register lines in " + storage.database + ": " +
                           status.message());
    }
  }

  BatchWriterOptions options;
  options.flush_interval_ms = storage.flush_interval_ms;
  options.batch_max_rows = storage.batch_max_rows > 0
                               ? static_cast<std::size_t>(storage.batch_max_rows)
                               : std::size_t{1};
  // The writer thread gets a connection of its own: SQLite connections are
  // opened single-threaded (SQLITE_OPEN_NOMUTEX) and store_ stays on this thread.
  std::unique_ptr<SqliteStore> writer_sqlite;
  status = SqliteStore::Open(storage.database, SqliteStore::Mode::kReadWrite, &writer_sqlite);
  if (!status.ok()) {
    return Status::Error("cannot open database " + storage.database + ": " + status.message());
  }
  writer_store_ = std::move(writer_sqlite);
  writer_ = std::make_unique<BatchWriter>(io_, *writer_store_, options);
  engine_ = std::make_unique<LineEngine>(config_.plant, *writer_, clock_, storage.raw_samples);
  // Restart state before anything can ingest (checkpoint_keeper.h).
  checkpoints_ = std::make_unique<CheckpointKeeper>(*store_, *engine_, *writer_, clock_);
  status = checkpoints_->Restore();
  if (!status.ok()) return status;
  alarms_ = std::make_unique<AlarmService>(io_, config_.alerting, clock_);
  status = alarms_->Start(storage.database, engine_->plant());
  if (!status.ok()) return Status::Error("cannot start alarms: " + status.message());
  engine_->SetFindingsListener(
      [this](const std::vector<Finding>& findings) { alarms_->OnFindings(findings); });
  server_ = std::make_unique<IngestServer>(io_, *engine_, config_.listen.max_connections);
  if (config_.listen.enabled) {  // off when the config has `sources:` and no `listen:`
    status = server_->Listen(config_.listen.address, config_.listen.port);
    if (!status.ok()) return status;
  }
  if (config_.http.enabled) {  // HTTP API and live page (http_server.h)
    http_api_ = std::make_unique<HttpApi>(io_, *engine_, *writer_, config_.plant, storage.database);
    http_api_->SetOperatorToken(config_.http.token);  // empty: no operator actions
    http_server_ = std::make_unique<HttpServer>(io_, *http_api_);
    status = http_server_->Listen(config_.http.address, config_.http.port);
    if (!status.ok()) return status;
    const auto http_endpoint = http_server_->local_endpoint();
    spdlog::info("http: serving on {}:{}", http_endpoint.address().to_string(),
                 http_endpoint.port());
  }
  sources_ = std::make_unique<SourceSet>(io_, *engine_);
  status = sources_->Start(config_.sources);
  if (!status.ok()) return status;

  boost::system::error_code ec;
  signals_.add(SIGINT, ec);
  if (!ec) signals_.add(SIGTERM, ec);
  if (!ec) signals_.add(SIGHUP, ec);  // reload
  if (ec) return Status::Error("cannot install signal handlers: " + ec.message());
  ArmSignals();
  // Writing to a peer that has gone must not kill the process.
  std::signal(SIGPIPE, SIG_IGN);

  writer_->Start();
  tick_due_ = std::chrono::steady_clock::now();
  // Not at once: a replayed feed with old record times (tests, demos) would
  // lose its samples before anyone looked at them.
  next_prune_ = tick_due_ + kFirstPruneDelay;
  next_checkpoint_ = tick_due_ + std::chrono::seconds(storage.checkpoint_interval_s);
  status_since_ = tick_due_;
  next_status_ = tick_due_ + kStatusPeriod;
  ArmTick();

  if (config_.listen.enabled) {
    const auto endpoint = server_->local_endpoint();
    spdlog::info("listening on {}:{}", endpoint.address().to_string(), endpoint.port());
  } else {
    spdlog::info("ready: {} configured sources, no listen block", config_.sources.size());
  }
  const auto watchdog = notifier_->watchdog_interval();
  if (watchdog.count() > 0) {
    spdlog::info("systemd watchdog: every {} ms; heftd pings from its 1 s tick",
                 watchdog.count() / 1000);
    if (watchdog < 2 * kTickPeriod) {
      spdlog::warn(
          "systemd watchdog interval {} ms is shorter than two ticks; set WatchdogSec "
          "to 2 s or more",
          watchdog.count() / 1000);
    }
  }
  NotifyStatus("READY=1\n");
  return Status::Ok();
}

void Daemon::ArmSignals() {
  signals_.async_wait([this](const boost::system::error_code& signal_ec, int signal_number) {
    OnSignal(signal_ec, signal_number);
  });
}

void Daemon::NotifyStatus(std::string_view prefix) {
  const auto now = std::chrono::steady_clock::now();
  const double seconds = std::chrono::duration<double>(now - status_since_).count();
  const LineEngine::Totals& t = engine_->totals();
  const double rate =
      seconds > 0.0 ? static_cast<double>(t.records - status_records_) / seconds : 0.0;
  status_since_ = now;
  status_records_ = t.records;
  notifier_->Notify(fmt::format(
      "{}STATUS={:.0f} records/s; {} lines; {} records, {} malformed; {} raised, {} cleared{}",
      prefix, rate, engine_->plant().line_count(), t.records, t.malformed, t.raised, t.cleared,
      writer_->failing() ? "; database writes failing" : ""));
}

void Daemon::PruneSamples() {
  const int days = config_.storage.raw_retention_days;
  if (days <= 0 || !config_.storage.raw_samples) return;
  const std::int64_t cutoff_ms = clock_.NowMs() - std::int64_t{days} * 86'400'000;
  const auto started = std::chrono::steady_clock::now();
  std::int64_t deleted = 0;
  const Status status = store_->PruneSamples(cutoff_ms, &deleted);
  const auto took = std::chrono::duration_cast<std::chrono::milliseconds>(
      std::chrono::steady_clock::now() - started);
  if (!status.ok()) {
    spdlog::error("retention: cannot prune raw samples older than {} days: {}", days,
                  status.message());
  } else {
    spdlog::info("retention: pruned {} raw samples older than {} days in {} ms", deleted, days,
                 took.count());
  }
}

void Daemon::Reload() {
  ++reloads_;
  const auto monotonic_us = std::chrono::duration_cast<std::chrono::microseconds>(
      std::chrono::steady_clock::now().time_since_epoch());
  notifier_->Notify(fmt::format("RELOADING=1\nMONOTONIC_USEC={}", monotonic_us.count()));
  spdlog::info("received SIGHUP: reloading {}", config_.path);
  Config fresh;
  std::vector<std::string> errors;
  const Status loaded = LoadConfigFile(config_.path, &fresh, &errors);
  if (!loaded.ok()) {
    if (errors.empty()) errors.push_back(loaded.message());
    for (const std::string& error : errors) spdlog::error("reload: {}", error);
    spdlog::error("reload rejected: {} error(s) in {}; the running configuration stays",
                  errors.size(), config_.path);
    NotifyStatus(
        fmt::format("READY=1\nSTATUS=reload rejected ({} errors); running on the old "
                    "config\n",
                    errors.size()));
    return;
  }
  if (!overrides_.database.empty()) fresh.storage.database = overrides_.database;
  if (overrides_.port >= 0) fresh.listen.port = overrides_.port;

  // What cannot change under a running process.
  std::vector<std::string> restart;
  const ListenSettings& l0 = config_.listen;
  const ListenSettings& l1 = fresh.listen;
  if (l0.enabled != l1.enabled || l0.address != l1.address || l0.port != l1.port ||
      l0.max_connections != l1.max_connections) {
    restart.push_back("listen");
  }
  const StorageSettings& s0 = config_.storage;
  const StorageSettings& s1 = fresh.storage;
  if (s0.database != s1.database) restart.push_back("storage.database");
  if (s0.raw_samples != s1.raw_samples) restart.push_back("storage.raw_samples");
  if (s0.flush_interval_ms != s1.flush_interval_ms) restart.push_back("storage.flush_interval_ms");
  if (s0.batch_max_rows != s1.batch_max_rows) restart.push_back("storage.batch_max_rows");
  if (config_.http.enabled != fresh.http.enabled || config_.http.address != fresh.http.address ||
      config_.http.port != fresh.http.port) {
    restart.push_back("http");
  }
  if (config_.sources.size() != fresh.sources.size()) restart.push_back("sources");
  if (config_.log.level != fresh.log.level || config_.log.file != fresh.log.file) {
    restart.push_back("log");
  }
  for (const std::string& what : restart) {
    spdlog::warn("reload: {} changed; needs restart (the running value stays)", what);
  }
  spdlog::info("reload: sources and alerting are read at start; changes to them need a restart");

  // Lines: register new and changed ones, then apply to the monitors.
  std::vector<LineRow> rows;
  for (const auto& [id, line] : fresh.plant.lines) {
    LineRow row;
    row.line = id;
    row.product = line.product;
    row.nominal_g = line.nominal_g;
    row.target_g = line.target_g;
    row.heads = line.heads;
    rows.push_back(std::move(row));
  }
  for (const auto& [id, line] : fresh.plant.lines) {
    if (config_.plant.lines.find(id) == config_.plant.lines.end()) {
      spdlog::info("reload: line {} added", id);
    }
  }
  for (const auto& [id, line] : config_.plant.lines) {
    if (fresh.plant.lines.find(id) == fresh.plant.lines.end()) {
      spdlog::warn(
          "reload: line {} no longer configured; a running monitor keeps its settings "
          "until a restart",
          id);
    }
  }
  if (!rows.empty()) {
    const Status upserted = store_->UpsertLines(rows);
    if (!upserted.ok()) spdlog::error("reload: cannot register lines: {}", upserted.message());
  }
  if (s0.raw_retention_days != s1.raw_retention_days) {
    spdlog::info("reload: storage.raw_retention_days {} -> {}", s0.raw_retention_days,
                 s1.raw_retention_days);
    config_.storage.raw_retention_days = s1.raw_retention_days;
    next_prune_ = std::chrono::steady_clock::now();  // apply at the next tick
  }
  if (s0.checkpoint_interval_s != s1.checkpoint_interval_s) {
    spdlog::info("reload: storage.checkpoint_interval_s {} -> {}", s0.checkpoint_interval_s,
                 s1.checkpoint_interval_s);
    config_.storage.checkpoint_interval_s = s1.checkpoint_interval_s;
    next_checkpoint_ =
        std::chrono::steady_clock::now() + std::chrono::seconds(s1.checkpoint_interval_s);
  }
  engine_->Reconfigure(fresh.plant);
  config_.plant = std::move(fresh.plant);
  spdlog::info("reload done: {} configured lines", config_.plant.lines.size());
  NotifyStatus("READY=1\n");
}

void Daemon::Run() { io_.run(); }

void Daemon::OnSignal(const boost::system::error_code& ec, int signal_number) {
  if (ec) return;  // operation_aborted: the signal set was cleared
  if (signal_number == SIGHUP) {
    if (stopping_) return;
    Reload();
    ArmSignals();
    return;
  }
  Shutdown(SignalName(signal_number));
}

void Daemon::Shutdown(std::string_view why) {
  if (stopping_) return;
  stopping_ = true;
  notifier_->Notify("STOPPING=1\nSTATUS=shutting down");
  spdlog::info("received {}: shutting down (a second signal exits at once)", why);
  // Swap Asio's handler for ExitAtOnce with both signals blocked, so none
  // arriving in between meets the default action.
  sigset_t both;
  sigemptyset(&both);
  sigaddset(&both, SIGINT);
  sigaddset(&both, SIGTERM);
  sigaddset(&both, SIGHUP);
  sigset_t previous;
  ::pthread_sigmask(SIG_BLOCK, &both, &previous);
  boost::system::error_code ignored;
  signals_.clear(ignored);
  signals_.cancel(ignored);
  InstallExitAtOnce();
  std::signal(SIGHUP, SIG_IGN);  // no reload (nor the default exit) while stopping
  ::pthread_sigmask(SIG_SETMASK, &previous, nullptr);
  tick_timer_.cancel();

  if (http_server_) http_server_->Stop();  // no more pages; then the API's worker ends
  if (http_api_) http_api_->Stop();
  server_->Stop();   // sessions finish their ingest: the last findings are queued
  sources_->Stop();  // configured sources too (source_set.h)
  // Open lots and findings continue at the next start; without a checkpoint
  // the open lots are stored as partial.
  if (checkpoints_->Save("shutdown")) {
    spdlog::info("checkpoint saved: {} lines continue at the next start",
                 engine_->plant().line_count());
  } else {
    engine_->CloseAllLots();
  }
  writer_->Stop();  // the last batch, synchronously
  alarms_->Stop();  // records the last transitions; workers finish their delivery
  const std::size_t unsaved_events = writer_->queued_events();
  const std::size_t unsaved_samples = writer_->queued_samples();
  writer_store_.reset();
  store_.reset();  // closes the database

  const LineEngine::Totals& t = engine_->totals();
  const BatchWriter::Counters& w = writer_->counters();
  spdlog::info(
      "heftd stopped: {} records ({} accepted, {} malformed, {} refused); {} events "
      "({} raised, {} cleared), {} written; {} samples written, {} dropped; "
      "{} events and {} samples not stored",
      t.records, t.accepted, t.malformed, t.refused, t.raised + t.cleared, t.raised, t.cleared,
      w.events_written, w.samples_written, w.samples_dropped, unsaved_events, unsaved_samples);
  spdlog::default_logger()->flush();
}

void Daemon::ArmTick() {
  tick_due_ += kTickPeriod;
  tick_timer_.expires_at(tick_due_);
  tick_timer_.async_wait([this](const boost::system::error_code& ec) { OnTick(ec); });
}

void Daemon::OnTick(const boost::system::error_code& ec) {
  if (ec || stopping_) return;
  const auto now = std::chrono::steady_clock::now();
  const auto late = std::chrono::duration_cast<std::chrono::milliseconds>(now - tick_due_);
  if (late > kTickLateWarning) {
    spdlog::warn("housekeeping tick ran {} ms late: the event loop was stalled", late.count());
    tick_due_ = now;  // do not fire a burst of catch-up ticks
  }
  engine_->AdvanceClock();
  alarms_->Tick();
  // The tick runs on the one thread that also ingests, writes and alerts, so
  // a ping here says that loop is alive (a stalled loop misses the ping).
  if (notifier_->watchdog_interval().count() > 0) notifier_->Notify("WATCHDOG=1");
  const auto after = std::chrono::steady_clock::now();
  if (after >= next_status_) {
    next_status_ = after + kStatusPeriod;
    NotifyStatus("");
  }
  if (config_.storage.checkpoint_interval_s > 0 && after >= next_checkpoint_) {
    next_checkpoint_ = after + std::chrono::seconds(config_.storage.checkpoint_interval_s);
    checkpoints_->Save("periodic");
  }
  if (after >= next_prune_) {
    next_prune_ = after + kPrunePeriod;
    PruneSamples();
  }
  ArmTick();
}

}  // namespace heft
