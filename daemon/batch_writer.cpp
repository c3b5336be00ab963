#include "batch_writer.h"

#include <algorithm>
#include <chrono>
#include <iterator>
#include <utility>

#include <fmt/format.h>
#include <spdlog/spdlog.h>
#include <boost/asio/post.hpp>

namespace heft {
namespace {

// Appends `from` to `to` and leaves `from` empty. A swap when `to` is empty,
// so the buffers' capacity circulates between the io and the writer thread.
template <class T>
void MoveAppend(std::vector<T>& to, std::vector<T>& from) {
  if (to.empty()) {
    to.swap(from);
    return;
  }
  to.insert(to.end(), std::make_move_iterator(from.begin()), std::make_move_iterator(from.end()));
  from.clear();
}

}  // namespace

void BatchWriter::Rows::Absorb(Rows& newer) {
  MoveAppend(events, newer.events);
  MoveAppend(samples, newer.samples);
  MoveAppend(lots, newer.lots);
}

BatchWriter::BatchWriter(boost::asio::io_context& io, Store& store, BatchWriterOptions options)
    : io_(io), timer_(io), store_(store), options_(options) {
  if (options_.flush_interval_ms < 1) options_.flush_interval_ms = 1;
  if (options_.batch_max_rows < 1) options_.batch_max_rows = 1;
  if (options_.max_queued_samples == 0) options_.max_queued_samples = 10 * options_.batch_max_rows;
  local_.events.reserve(64);
  local_.samples.reserve(options_.batch_max_rows);
}

BatchWriter::~BatchWriter() {
  if (!thread_.joinable()) return;
  {
    std::lock_guard<std::mutex> lock(mu_);
    stop_ = true;
  }
  wake_writer_.notify_all();
  thread_.join();
}

void BatchWriter::Start() {
  if (thread_.joinable() || stopped_) return;
  thread_ = std::thread([this] { WriterLoop(); });
  ArmTimer();
}

void BatchWriter::ArmTimer() {
  if (stopped_) return;
  timer_.expires_after(std::chrono::milliseconds(options_.flush_interval_ms));
  timer_.async_wait([this](const boost::system::error_code& ec) {
    if (ec == boost::asio::error::operation_aborted || stopped_) return;  // stopping
    HandOverRows(HandOver::kTimer);
    ArmTimer();
  });
}

void BatchWriter::AddEvent(EventRow row) {
  local_.events.push_back(std::move(row));
  if (local_.events.size() + local_.samples.size() >= options_.batch_max_rows) {
    HandOverRows(HandOver::kFull);
  }
}

void BatchWriter::AddSample(SampleRow row) {
  const std::size_t queued = local_.samples.size() + held_samples_.load(std::memory_order_relaxed);
  if (queued >= options_.max_queued_samples) {
    ++samples_dropped_;
    if (dropped_in_spell_.fetch_add(1, std::memory_order_relaxed) == 0) {
      spdlog::warn(
          "storage: sample queue full ({} samples); dropping raw samples until writes "
          "catch up (events are kept)",
          queued);
    }
    return;
  }
  local_.samples.push_back(std::move(row));
  if (local_.events.size() + local_.samples.size() >= options_.batch_max_rows) {
    HandOverRows(HandOver::kFull);
  }
}

void BatchWriter::AddLot(LotRow row) { local_.lots.push_back(std::move(row)); }

void BatchWriter::UpdateHeldSamples() {
  held_samples_.store(inbox_.samples.size() + work_.samples.size(), std::memory_order_relaxed);
}

void BatchWriter::HandOverRows(HandOver why) {
  if (!thread_.joinable()) {
    // Not started or stopped: write here. While failing only Flush() and the
    // timer retry; hammering a broken disk on every record would stall ingest.
    if (why == HandOver::kFull && !failing()) Flush();
    return;
  }
  std::unique_lock<std::mutex> lock(mu_);
  if (failing_.load(std::memory_order_relaxed)) {
    // The writer retries on its own schedule, with these rows too.
    inbox_.Absorb(local_);
    ++handed_;
    UpdateHeldSamples();
    return;
  }
  if (why == HandOver::kFull) {
    // Double buffering: wait until the writer has committed the previous
    // batch. Ingest slows to the store's pace instead of queueing without
    // bound; a write that fails ends the wait.
    writer_done_.wait(lock, [this] {
      return (inbox_.empty() && !busy_) || stop_ || failing_.load(std::memory_order_relaxed);
    });
  } else if (!inbox_.empty() || busy_) {
    return;  // timer: the writer is busy; these rows go with the next hand-over
  }
  if (local_.empty()) return;
  inbox_.Absorb(local_);
  ++handed_;
  UpdateHeldSamples();
  lock.unlock();
  wake_writer_.notify_one();
}

bool BatchWriter::Flush() {
  std::unique_lock<std::mutex> lock(mu_);
  if (!thread_.joinable()) {
    work_.Absorb(inbox_);
    work_.Absorb(local_);
    return WriteWork(lock, false);
  }
  if (failing_.load(std::memory_order_relaxed) && busy_) {
    // A retry is under way (it may wait out the busy timeout): its result
    // answers this Flush too, so a failing store blocks the caller once, not twice.
    const std::uint64_t attempt = attempts_;
    writer_done_.wait(lock, [&] { return attempts_ != attempt || stop_; });
    if (failing_.load(std::memory_order_relaxed)) {
      inbox_.Absorb(local_);
      ++handed_;
      UpdateHeldSamples();
      return false;
    }
  }
  inbox_.Absorb(local_);
  const std::uint64_t handed = ++handed_;
  UpdateHeldSamples();
  retry_now_ = true;  // also cuts a backoff short
  wake_writer_.notify_one();
  writer_done_.wait(lock, [&] { return done_ >= handed || stop_; });
  return last_ok_ && done_ >= handed;
}

void BatchWriter::WriterLoop() {
  std::unique_lock<std::mutex> lock(mu_);
  while (true) {
    if (!work_.empty()) {
      // Rows held after a failed write: back off before trying again.
      const int delay_ms =
          failing_.load(std::memory_order_relaxed) ? retry_delay_ms_ : options_.flush_interval_ms;
      wake_writer_.wait_for(lock, std::chrono::milliseconds(delay_ms),
                            [this] { return stop_ || retry_now_; });
    } else {
      wake_writer_.wait(lock, [this] { return stop_ || retry_now_ || !inbox_.empty(); });
    }
    if (stop_) return;  // Stop() writes what is left on its own thread
    retry_now_ = false;
    WriteWork(lock, true);
  }
}

bool BatchWriter::WriteWork(std::unique_lock<std::mutex>& lock, bool from_writer) {
  LogLines lines;
  LogLines* log = &lines;
  work_.Absorb(inbox_);
  const std::uint64_t covers = handed_;
  const bool has_batch = !work_.events.empty() || !work_.samples.empty();
  const bool has_lots = !work_.lots.empty();
  Status batch = Status::Ok();
  Status lots = Status::Ok();
  busy_ = true;
  lock.unlock();
  // Unlocked: work_ belongs to whoever runs WriteWork (the writer thread, or
  // the calling thread when there is none); the io thread only reads its
  // sizes, under the lock.
  if (has_batch) batch = store_.WriteBatch(work_.events, work_.samples);
  if (batch.ok() && has_lots) lots = store_.WriteLots(work_.lots);
  lock.lock();
  busy_ = false;

  if (has_batch && !batch.ok()) {
    ++counters_.failed_writes;
    ++failures_in_spell_;
    if (!failing_.load(std::memory_order_relaxed)) {
      failing_.store(true, std::memory_order_relaxed);
      first_error_ = batch;
      retry_delay_ms_ = options_.flush_interval_ms;
      log->emplace_back(
          spdlog::level::err,
          fmt::format("storage: write failed: {}; holding {} events and {} samples and retrying, "
                      "backing off up to {} s (samples beyond {} are dropped, events are kept)",
                      batch.message(), work_.events.size(), work_.samples.size(),
                      kMaxRetryDelayMs / 1000, options_.max_queued_samples));
    } else {
      retry_delay_ms_ = std::min(kMaxRetryDelayMs, 2 * retry_delay_ms_);
    }
  } else if (has_batch) {
    counters_.events_written += static_cast<std::int64_t>(work_.events.size());
    counters_.samples_written += static_cast<std::int64_t>(work_.samples.size());
    const std::int64_t dropped = dropped_in_spell_.exchange(0, std::memory_order_relaxed);
    if (failing_.load(std::memory_order_relaxed)) {
      log->emplace_back(
          spdlog::level::info,
          fmt::format("storage: writes recovered after {} failed attempts (first error: {}); "
                      "wrote {} held events and {} samples; {} samples were dropped meanwhile",
                      failures_in_spell_, first_error_.message(), work_.events.size(),
                      work_.samples.size(), dropped));
    } else if (dropped > 0) {
      log->emplace_back(
          spdlog::level::info,
          fmt::format("storage: caught up; {} samples were dropped while the queue was full",
                      dropped));
    }
    failing_.store(false, std::memory_order_relaxed);
    failures_in_spell_ = 0;
    work_.events.clear();
    work_.samples.clear();
  }
  if (has_lots && batch.ok()) {
    if (!lots.ok()) {
      ++counters_.failed_lot_writes;
      if (!lots_failing_) {
        lots_failing_ = true;
        log->emplace_back(
            spdlog::level::err,
            fmt::format("storage: writing {} closed lots failed: {}; holding them and retrying",
                        work_.lots.size(), lots.message()));
      }
    } else {
      if (lots_failing_) {
        log->emplace_back(
            spdlog::level::info,
            fmt::format("storage: lot writes recovered; wrote {} lots", work_.lots.size()));
      }
      lots_failing_ = false;
      counters_.lots_written += static_cast<std::int64_t>(work_.lots.size());
      work_.lots.clear();
    }
  }
  UpdateHeldSamples();
  // Before done_: whoever waits in Flush() finds the lines already posted.
  Emit(std::move(lines), from_writer);
  done_ = covers;
  ++attempts_;
  last_ok_ = work_.empty();
  writer_done_.notify_all();
  return last_ok_;
}

void BatchWriter::Emit(LogLines lines, bool from_writer) {
  for (auto& [level, text] : lines) {
    if (from_writer) {
      boost::asio::post(io_, [level = level, text = std::move(text)] { spdlog::log(level, text); });
    } else {
      spdlog::log(level, text);
    }
  }
}

void BatchWriter::Stop() {
  stopped_ = true;
  timer_.cancel();
  if (thread_.joinable()) {
    {
      std::lock_guard<std::mutex> lock(mu_);
      stop_ = true;
    }
    wake_writer_.notify_all();
    thread_.join();  // after its current write, if any
  }
  if (!Flush()) {  // no thread now: writes here
    spdlog::error("storage: final write failed; {} events, {} samples and {} lots were not stored",
                  queued_events(), queued_samples(), queued_lots());
  }
}

BatchWriter::Counters BatchWriter::counters() const {
  std::lock_guard<std::mutex> lock(mu_);
  Counters c = counters_;
  c.samples_dropped = samples_dropped_;
  return c;
}

std::size_t BatchWriter::queued_events() const {
  std::lock_guard<std::mutex> lock(mu_);
  return local_.events.size() + inbox_.events.size() + work_.events.size();
}

std::size_t BatchWriter::queued_samples() const {
  std::lock_guard<std::mutex> lock(mu_);
  return local_.samples.size() + inbox_.samples.size() + work_.samples.size();
}

std::size_t BatchWriter::queued_lots() const {
  std::lock_guard<std::mutex> lock(mu_);
  return local_.lots.size() + inbox_.lots.size() + work_.lots.size();
}

}  // namespace heft
