// batch_writer.h — queues events and raw samples and writes them to the Store
// in batches (one transaction per batch).
//
// Used by LineEngine (which queues) and Daemon (which starts and stops it).
// A batch is written every `flush_interval_ms` by a steady_timer, or at once
// when `batch_max_rows` rows are queued. Events are never dropped; raw samples
// are bounded (`max_queued_samples`) and dropped, with a count, when storage
// cannot keep up. A failed write is sticky like a background error: it is
// logged once, everything stays queued, the next timer tick retries, and the
// recovery is logged. While failing, retries back off (doubling, up to
// kMaxRetryDelay) because a write may block for the store's busy timeout and
// must not starve ingest, which shares this thread.
//
// Not thread-safe: lives on the daemon's single io_context thread. `io` and
// `store` are borrowed and must outlive this object; after Stop() the store is
// no longer touched and may be closed.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

#include <boost/asio/io_context.hpp>
#include <boost/asio/steady_timer.hpp>

#include "core/model/status.h"
#include "io/store.h"

namespace heft {

struct BatchWriterOptions {
  int flush_interval_ms = 250;          // commit interval: bounds what a power cut loses
  std::size_t batch_max_rows = 20'000;  // rows (events + samples) that trigger a write at once
  std::size_t max_queued_samples = 0;   // 0 = 10 x batch_max_rows
};

class BatchWriter {
 public:
  static constexpr int kMaxRetryDelayMs = 10'000;

  struct Counters {
    std::int64_t events_written = 0;
    std::int64_t samples_written = 0;
    std::int64_t samples_dropped = 0;  // queue full while storage was failing or slow
    std::int64_t failed_writes = 0;    // WriteBatch calls that returned an error
    std::int64_t lots_written = 0;
    std::int64_t failed_lot_writes = 0;  // WriteLots calls that returned an error
  };

  BatchWriter(boost::asio::io_context& io, Store& store, BatchWriterOptions options);
  BatchWriter(const BatchWriter&) = delete;
  BatchWriter& operator=(const BatchWriter&) = delete;

  // Arms the flush timer.
  void Start();
  // Queues one event; never dropped.
  void AddEvent(EventRow row);
  // Queues one raw sample; dropped (and counted) when the sample queue is full.
  void AddSample(SampleRow row);
  // Queues one closed lot; never dropped. Lots go in their own transaction
  // (Store::WriteLots) after the events and samples of the same flush.
  void AddLot(LotRow row);
  // Writes everything queued now, synchronously. True when the queue is empty
  // afterwards; false after a failed write (rows stay queued).
  bool Flush();
  // Cancels the timer and makes a last synchronous Flush(). REQUIRES: no
  // further Add*() calls.
  void Stop();

  const Counters& counters() const { return counters_; }
  std::size_t queued_events() const { return events_.size(); }
  std::size_t queued_samples() const { return samples_.size(); }
  std::size_t queued_lots() const { return lots_.size(); }
  // True from a failed write until the next successful one.
  bool failing() const { return failing_; }

 private:
  void ArmTimer();
  void FlushIfFull();
  bool FlushLots();  // true when no lot stays queued

  boost::asio::steady_timer timer_;
  Store& store_;
  BatchWriterOptions options_;
  std::vector<EventRow> events_;
  std::vector<SampleRow> samples_;
  std::vector<LotRow> lots_;
  bool lots_failing_ = false;  // logged once per failing spell
  Counters counters_;
  bool stopped_ = false;
  bool failing_ = false;  // sticky until a write succeeds
  Status first_error_;    // the error that started the failing spell
  std::int64_t failures_in_spell_ = 0;
  std::int64_t dropped_in_spell_ = 0;  // samples dropped since the queue filled
  int retry_delay_ms_ = 0;             // timer delay while failing (backs off)
};

}  // namespace heft
