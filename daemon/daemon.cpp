#include "daemon.h"

#include <pthread.h>
#include <signal.h>
#include <unistd.h>

#include <csignal>
#include <utility>
#include <vector>

#include <spdlog/spdlog.h>

#include "batch_writer.h"
#include "clock.h"
#include "http_api.h"
#include "http_server.h"
#include "ingest_server.h"
#include "source_set.h"
#include "io/sqlite_store.h"
#include "alarm_service.h"
#include "line_engine.h"

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
    default:
      return "signal";
  }
}

}  // namespace

Daemon::Daemon(Config config, const Clock& clock)
    : config_(std::move(config)), clock_(clock), signals_(io_), tick_timer_(io_) {}

Daemon::~Daemon() = default;

Status Daemon::Start() {
  const StorageSettings& storage = config_.storage;
  std::unique_ptr<SqliteStore> sqlite;
  Status status = SqliteStore::Open(storage.database, SqliteStore::Mode::kReadWrite, &sqlite);
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
  writer_ = std::make_unique<BatchWriter>(io_, *store_, options);
  engine_ = std::make_unique<LineEngine>(config_.plant, *writer_, clock_, storage.raw_samples);
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
  if (ec) return Status::Error("cannot install signal handlers: " + ec.message());
  signals_.async_wait([this](const boost::system::error_code& signal_ec, int signal_number) {
    OnSignal(signal_ec, signal_number);
  });
  // Writing to a peer that has gone must not kill the process.
  std::signal(SIGPIPE, SIG_IGN);

  writer_->Start();
  tick_due_ = std::chrono::steady_clock::now();
  ArmTick();

  if (config_.listen.enabled) {
    const auto endpoint = server_->local_endpoint();
    spdlog::info("listening on {}:{}", endpoint.address().to_string(), endpoint.port());
  } else {
    spdlog::info("ready: {} configured sources, no listen block", config_.sources.size());
  }
  return Status::Ok();
}

void Daemon::Run() { io_.run(); }

void Daemon::OnSignal(const boost::system::error_code& ec, int signal_number) {
  if (ec) return;  // operation_aborted: the signal set was cleared
  Shutdown(SignalName(signal_number));
}

void Daemon::Shutdown(std::string_view why) {
  if (stopping_) return;
  stopping_ = true;
  spdlog::info("received {}: shutting down (a second signal exits at once)", why);
  // Swap Asio's handler for ExitAtOnce with both signals blocked, so none
  // arriving in between meets the default action.
  sigset_t both;
  sigemptyset(&both);
  sigaddset(&both, SIGINT);
  sigaddset(&both, SIGTERM);
  sigset_t previous;
  ::pthread_sigmask(SIG_BLOCK, &both, &previous);
  boost::system::error_code ignored;
  signals_.clear(ignored);
  signals_.cancel(ignored);
  InstallExitAtOnce();
  ::pthread_sigmask(SIG_SETMASK, &previous, nullptr);
  tick_timer_.cancel();

  if (http_server_) http_server_->Stop();  // no more pages; then the API's worker ends
  if (http_api_) http_api_->Stop();
  server_->Stop();  // sessions finish their ingest: the last findings are queued
  sources_->Stop();  // configured sources too (source_set.h)
  engine_->CloseAllLots();  // open lots are stored as partial
  writer_->Stop();  // the last batch, synchronously
  alarms_->Stop();  // records the last transitions; workers finish their delivery
  const std::size_t unsaved_events = writer_->queued_events();
  const std::size_t unsaved_samples = writer_->queued_samples();
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
  ArmTick();
}

}  // namespace heft
