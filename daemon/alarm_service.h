// alarm_service.h — heftd's alarm side: the AlarmBook, operator messages,
// the alarm tables and the delivery workers.
//
// On the io_context thread: findings (from LineEngine) and the housekeeping
// tick go through the AlarmBook; each transition gets its message and JSON,
// is logged by any `log` channel (`ALARM ...` lines), and is recorded with
// one outbox row per routed channel in one SQLite transaction (a few rows, on
// the same thread that already writes the event batches). Operator requests
// (`heft ack|shelve|unshelve` rows in alarm_requests) are picked up on the
// tick and applied. Delivery happens on one DeliveryWorker thread per channel
// (see io/notify/delivery_worker.h), so nothing here waits on a network.
// Start() restores the alarms an earlier run left unfinished (active,
// unacknowledged or shelved) into the AlarmBook and continues its sequence.
// Not thread-safe: io_context thread only (the workers log through post()).
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include <boost/asio/io_context.hpp>

#include "core/alarm/alarm_book.h"
#include "core/model/finding.h"
#include "core/model/status.h"
#include "io/alarm_store.h"
#include "io/alerting_settings.h"
#include "io/notify/delivery_worker.h"

namespace heft {

class Clock;
class Plant;

class AlarmService {
 public:
  AlarmService(boost::asio::io_context& io, AlertingSettings settings, const Clock& clock);
  ~AlarmService();
  AlarmService(const AlarmService&) = delete;
  AlarmService& operator=(const AlarmService&) = delete;

  // Opens the alarm tables of `db_path` and starts the delivery workers.
  // `plant` (borrowed, for line settings in messages) must outlive this.
  Status Start(const std::string& db_path, const Plant& plant);
  void OnFindings(const std::vector<Finding>& findings);
  // Housekeeping tick: timers, operator requests, retry of a failed record.
  void Tick();
  // Records what is left and stops the workers (each finishes its delivery
  // in progress; undelivered rows stay in the outbox).
  void Stop();

  const AlarmBook& book() const { return book_; }

 private:
  void Handle(std::vector<AlarmTransition>& transitions);
  void ApplyRequests();
  void Flush();

  boost::asio::io_context& io_;
  AlertingSettings settings_;
  const Clock& clock_;
  AlarmBook book_;
  const Plant* plant_ = nullptr;
  std::unique_ptr<AlarmStore> store_;
  std::vector<std::unique_ptr<DeliveryWorker>> workers_;
  std::vector<TransitionRecord> unrecorded_;  // kept while the database refuses writes
  bool record_failing_ = false;
  std::vector<AlarmTransition> scratch_;
};

}  // namespace heft
