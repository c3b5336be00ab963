#include "batch_writer.h"

#include <algorithm>
#include <chrono>
#include <utility>

#include <spdlog/spdlog.h>

namespace heft {

BatchWriter::BatchWriter(boost::asio::io_context& io, Store& store, BatchWriterOptions options)
    : timer_(io), store_(store), options_(options) {
  if (options_.flush_interval_ms < 1) options_.flush_interval_ms = 1;
  if (options_.batch_max_rows < 1) options_.batch_max_rows = 1;
  if (options_.max_queued_samples == 0) options_.max_queued_samples = 10 * options_.batch_max_rows;
  events_.reserve(64);
  samples_.reserve(options_.batch_max_rows);
}

void BatchWriter::Start() { ArmTimer(); }

void BatchWriter::ArmTimer() {
  if (stopped_) return;
  const int delay_ms = failing_ ? retry_delay_ms_ : options_.flush_interval_ms;
  timer_.expires_after(std::chrono::milliseconds(delay_ms));
  timer_.async_wait([this](const boost::system::error_code& ec) {
    if (ec == boost::asio::error::operation_aborted || stopped_) return;  // stopping
    Flush();
    ArmTimer();
  });
}

void BatchWriter::AddEvent(EventRow row) {
  events_.push_back(std::move(row));
  FlushIfFull();
}

void BatchWriter::AddSample(SampleRow row) {
  if (samples_.size() >= options_.max_queued_samples) {
    ++counters_.samples_dropped;
    if (dropped_in_spell_++ == 0) {
      spdlog::warn(
          "storage: sample queue full ({} samples); dropping raw samples until writes "
          "catch up (events are kept)",
          samples_.size());
    }
    return;
  }
  samples_.push_back(std::move(row));
  FlushIfFull();
}

void BatchWriter::AddLot(LotRow row) { lots_.push_back(std::move(row)); }

bool BatchWriter::FlushLots() {
  if (lots_.empty()) return true;
  const Status status = store_.WriteLots(lots_);
  if (!status.ok()) {
    ++counters_.failed_lot_writes;
    if (!lots_failing_) {
      lots_failing_ = true;
      spdlog::error("storage: writing {} closed lots failed: {}; holding them and retrying",
                    lots_.size(), status.message());
    }
    return false;
  }
  if (lots_failing_) spdlog::info("storage: lot writes recovered; wrote {} lots", lots_.size());
  lots_failing_ = false;
  counters_.lots_written += static_cast<std::int64_t>(lots_.size());
  lots_.clear();
  return true;
}

void BatchWriter::FlushIfFull() {
  // While failing, only the timer retries: hammering a broken disk on every
  // record would stall ingest for nothing.
  if (failing_) return;
  if (events_.size() + samples_.size() >= options_.batch_max_rows) Flush();
}

bool BatchWriter::Flush() {
  if (events_.empty() && samples_.empty()) return FlushLots();
  const Status status = store_.WriteBatch(events_, samples_);
  if (!status.ok()) {
    ++counters_.failed_writes;
    ++failures_in_spell_;
    if (!failing_) {
      failing_ = true;
      first_error_ = status;
      retry_delay_ms_ = options_.flush_interval_ms;
      spdlog::error(
          "storage: write failed: {}; holding {} events and {} samples and retrying, "
          "backing off up to {} s (samples beyond {} are dropped, events are kept)",
          status.message(), events_.size(), samples_.size(), kMaxRetryDelayMs / 1000,
          options_.max_queued_samples);
    } else {
      retry_delay_ms_ = std::min(kMaxRetryDelayMs, 2 * retry_delay_ms_);
    }
    return false;
  }
  counters_.events_written += static_cast<std::int64_t>(events_.size());
  counters_.samples_written += static_cast<std::int64_t>(samples_.size());
  if (failing_) {
    spdlog::info(
        "storage: writes recovered after {} failed attempts (first error: {}); wrote {} "
        "held events and {} samples; {} samples were dropped meanwhile",
        failures_in_spell_, first_error_.message(), events_.size(), samples_.size(),
        dropped_in_spell_);
  } else if (dropped_in_spell_ > 0) {
    spdlog::info("storage: caught up; {} samples were dropped while the queue was full",
                 dropped_in_spell_);
  }
  failing_ = false;
  failures_in_spell_ = 0;
  dropped_in_spell_ = 0;
  events_.clear();
  samples_.clear();
  return FlushLots();
}

void BatchWriter::Stop() {
  stopped_ = true;
  timer_.cancel();
  const std::size_t events = events_.size();
  const std::size_t samples = samples_.size();
  if (!Flush()) {
    spdlog::error(
        "storage: final write failed; {} events, {} samples and {} lots were not stored",
        events_.empty() ? 0 : events, samples_.empty() ? 0 : samples, lots_.size());
  }
}

}  // namespace heft
