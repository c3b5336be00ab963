#include "io/notify/delivery_worker.h"

#include <algorithm>
#include <chrono>
#include <utility>
#include <vector>

#include <fmt/format.h>

namespace heft {
namespace {
constexpr int kBatchRows = 64;
constexpr std::int64_t kIdlePollMs = 1000;  // also picks up rows another process added
}  // namespace

DeliveryWorker::DeliveryWorker(std::string db_path, std::string channel_name, OutboxSettings outbox,
                               std::unique_ptr<Channel> channel, LogFn log, NowFn now)
    : db_path_(std::move(db_path)),
      name_(std::move(channel_name)),
      outbox_(outbox),
      channel_(std::move(channel)),
      log_(std::move(log)),
      now_(std::move(now)) {}

DeliveryWorker::~DeliveryWorker() { Stop(); }

Status DeliveryWorker::Start() {
  if (Status s = AlarmStore::Open(db_path_, AlarmStore::Mode::kReadWrite, &store_); !s.ok()) {
    return Status::Error("channel " + name_ + ": " + s.message());
  }
  thread_ = std::thread([this] { Run(); });
  return Status::Ok();
}

void DeliveryWorker::Wake() {
  {
    std::lock_guard<std::mutex> lock(mutex_);
    wake_ = true;
  }
  cv_.notify_one();
}

void DeliveryWorker::Stop() {
  {
    std::lock_guard<std::mutex> lock(mutex_);
    stop_ = true;
  }
  cv_.notify_one();
  if (thread_.joinable()) thread_.join();
}

void DeliveryWorker::Run() {
  while (true) {
    const std::int64_t next_retry = Drain();
    std::unique_lock<std::mutex> lock(mutex_);
    if (stop_) break;
    std::int64_t wait_ms = kIdlePollMs;
    if (next_retry > 0) wait_ms = std::clamp<std::int64_t>(next_retry - now_(), 1, kIdlePollMs);
    cv_.wait_for(lock, std::chrono::milliseconds(wait_ms), [this] { return wake_ || stop_; });
    wake_ = false;
    if (stop_) break;
  }
  channel_->Close();
  store_.reset();
}

std::int64_t DeliveryWorker::Drain() {
  std::int64_t expired = 0;
  if (Status s = store_->ExpireOutbox(now_(), &expired); !s.ok()) {
    log_(LogLevel::kWarn, fmt::format("channel {}: {}", name_, s.message()));
    return now_() + outbox_.retry_min_ms;
  }
  if (expired > 0) {
    log_(LogLevel::kWarn,
         fmt::format("channel {}: {} alarm deliveries expired undelivered", name_, expired));
  }
  std::vector<OutboxItem> items;
  if (Status s = store_->PendingOutbox(name_, kBatchRows, &items); !s.ok()) {
    log_(LogLevel::kWarn, fmt::format("channel {}: {}", name_, s.message()));
    return now_() + outbox_.retry_min_ms;
  }
  for (const OutboxItem& item : items) {
    {
      std::lock_guard<std::mutex> lock(mutex_);
      if (stop_) return 0;
    }
    const std::int64_t now = now_();
    if (item.next_attempt_ms > now) return item.next_attempt_ms;  // keep the order
    const Status delivered = channel_->Deliver(item);
    const std::int64_t after = now_();
    if (delivered.ok()) {
      if (Status s = store_->MarkDelivered(item.id, after); !s.ok()) {
        log_(LogLevel::kWarn, fmt::format("channel {}: {}", name_, s.message()));
        return after + outbox_.retry_min_ms;  // delivered again later: receivers dedup
      }
      ++delivered_;
      if (failing_) {
        failing_ = false;
        log_(LogLevel::kInfo, fmt::format("channel {}: delivering again", name_));
      }
      continue;
    }
    ++failures_;
    const int shift = std::min(item.attempts, 20);
    const std::int64_t delay =
        std::min(outbox_.retry_max_ms, outbox_.retry_min_ms * (std::int64_t{1} << shift));
    if (!failing_) {
      failing_ = true;
      log_(LogLevel::kWarn,
           fmt::format("channel {}: delivery failed, will retry: {}", name_, delivered.message()));
    }
    if (Status s = store_->MarkFailed(item.id, after + delay, delivered.message()); !s.ok()) {
      log_(LogLevel::kWarn, fmt::format("channel {}: {}", name_, s.message()));
    }
    return after + delay;
  }
  return items.size() == static_cast<std::size_t>(kBatchRows) ? now_() : 0;
}

}  // namespace heft
