// batch_writer.h — queues events, raw samples and closed lots and writes them
// to the Store in batches (one transaction per batch) on its own thread.
//
// Used by LineEngine (which queues), CheckpointKeeper (Flush) and Daemon
// (which starts and stops it). Rows are appended on the io thread without a
// lock; a batch is handed to the writer thread every `flush_interval_ms` (a
// steady_timer) or at once when `batch_max_rows` rows are queued. The writer
// thread owns the Store (SQLite time no longer blocks ingest), so the Store
// must be a connection nobody else uses.
//
// Double buffering: the io thread fills one batch while the writer commits
// the previous one. A full batch waits for the writer to finish the previous
// one (back-pressure onto the feed's TCP window), so at most two batches are
// uncommitted while storage keeps up: the one being written and the one being
// filled. Events are never dropped; raw samples are bounded
// (`max_queued_samples`) and dropped, with a count, when storage cannot keep
// up. A failed write is sticky like a background error: it is logged once,
// everything stays queued, the writer retries with backoff (doubling, up to
// kMaxRetryDelayMs; it may block for the store's busy timeout), the io thread
// no longer waits for it, and the recovery is logged. Lots go in their own
// transaction (Store::WriteLots) after the events and samples of a batch.
//
// Thread-safety: every public method is for the io thread (the one that runs
// `io`). The writer thread logs by posting to `io` (spdlog sinks are
// single-threaded). Before Start() and from Stop() on, writes happen on the
// calling thread. `io` and `store` are borrowed and must outlive this object;
// after Stop() the store is no longer touched and may be closed.
#pragma once

#include <atomic>
#include <condition_variable>
#include <cstddef>
#include <cstdint>
#include <mutex>
#include <string>
#include <thread>
#include <utility>
#include <vector>

#include <spdlog/common.h>
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
  // Stops the thread without the last flush when Stop() was not called.
  ~BatchWriter();
  BatchWriter(const BatchWriter&) = delete;
  BatchWriter& operator=(const BatchWriter&) = delete;

  // Starts the writer thread and arms the hand-over timer.
  void Start();
  // Queues one event; never dropped.
  void AddEvent(EventRow row);
  // Queues one raw sample; dropped (and counted) when the sample queue is full.
  void AddSample(SampleRow row);
  // Queues one closed lot; never dropped. Lots go in their own transaction
  // (Store::WriteLots) after the events and samples of the same batch.
  void AddLot(LotRow row);
  // Writes everything queued now and waits for the commit. True when the
  // queue is empty afterwards; false after a failed write (rows stay queued).
  // While failing, a retry already under way stands for this one.
  bool Flush();
  // Cancels the timer, ends the writer thread (after its current write) and
  // makes a last synchronous write of everything queued on the calling
  // thread. REQUIRES: no further Add*() calls.
  void Stop();

  // Snapshots, safe while the writer thread runs.
  Counters counters() const;
  std::size_t queued_events() const;
  std::size_t queued_samples() const;
  std::size_t queued_lots() const;
  // True from a failed write until the next successful one.
  bool failing() const { return failing_.load(std::memory_order_relaxed); }

 private:
  struct Rows {
    std::vector<EventRow> events;
    std::vector<SampleRow> samples;
    std::vector<LotRow> lots;
    bool empty() const { return events.empty() && samples.empty() && lots.empty(); }
    // Appends `newer` after these rows (moving; a swap when these are empty).
    void Absorb(Rows& newer);
  };
  using LogLines = std::vector<std::pair<spdlog::level::level_enum, std::string>>;

  enum class HandOver { kFull, kTimer, kFlush };

  void ArmTimer();
  void HandOverRows(HandOver why);
  void WriterLoop();
  // Writes work_ (lock held on entry and exit; released around the Store
  // calls), logs what happened and wakes Flush(). True when work_ is empty
  // afterwards. `from_writer`: called on the writer thread.
  bool WriteWork(std::unique_lock<std::mutex>& lock, bool from_writer);
  // Logs on this thread, or (from_writer) posts each line to the io thread.
  void Emit(LogLines lines, bool from_writer);
  void UpdateHeldSamples();  // lock held

  boost::asio::io_context& io_;
  boost::asio::steady_timer timer_;
  Store& store_;
  BatchWriterOptions options_;

  // io thread only.
  Rows local_;  // being filled
  bool stopped_ = false;
  std::int64_t samples_dropped_ = 0;

  // Shared, under mu_.
  mutable std::mutex mu_;
  std::condition_variable wake_writer_;  // rows handed over, flush asked, stop
  std::condition_variable writer_done_;  // an attempt ended
  Rows inbox_;                           // handed over, not yet taken by the writer
  Rows work_;                   // taken by the writer: being written, or held after a failure
  bool busy_ = false;           // the writer is inside a Store call
  bool stop_ = false;           // the writer thread must end
  bool retry_now_ = false;      // Flush(): do not wait for the backoff
  std::uint64_t handed_ = 0;    // hand-overs so far
  std::uint64_t done_ = 0;      // hand-overs covered by the last finished attempt
  std::uint64_t attempts_ = 0;  // finished attempts
  bool last_ok_ = true;         // result of that attempt
  Counters counters_;           // written_ and failed_ fields
  bool lots_failing_ = false;   // logged once per failing spell
  Status first_error_;          // the error that started the failing spell
  std::int64_t failures_in_spell_ = 0;
  int retry_delay_ms_ = 0;  // writer's wait while failing (backs off)

  std::thread thread_;
  std::atomic<bool> failing_{false};               // sticky until a write succeeds
  std::atomic<std::size_t> held_samples_{0};       // samples in inbox_ + work_
  std::atomic<std::int64_t> dropped_in_spell_{0};  // since the queue filled
};

}  // namespace heft
