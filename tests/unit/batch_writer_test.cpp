// batch_writer_test.cpp — heftd's BatchWriter with its writer thread, over a
// MemoryStore: hand-over by size and by timer, double-buffering back-pressure,
// failures held and retried, samples capped while failing, lots in their own
// transaction, Stop()'s last synchronous write and the log lines about it.
#include <atomic>
#include <chrono>
#include <condition_variable>
#include <memory>
#include <mutex>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

#include <spdlog/sinks/ostream_sink.h>
#include <spdlog/spdlog.h>
#include <boost/asio/io_context.hpp>
#include <catch2/catch.hpp>

#include "batch_writer.h"
#include "io/memory_store.h"

namespace heft {
namespace {

using namespace std::chrono_literals;

// A MemoryStore that the writer thread and the test may use at once (a lock
// around every write and every look), and whose batch writes can be held at a
// gate to stand for a slow disk.
class SharedStore : public MemoryStore {
 public:
  Status WriteBatch(const std::vector<EventRow>& events,
                    const std::vector<SampleRow>& samples) override {
    std::unique_lock<std::mutex> lock(mu_);
    ++batch_calls_;
    changed_.notify_all();
    changed_.wait(lock, [this] { return open_; });
    return MemoryStore::WriteBatch(events, samples);
  }
  Status WriteLots(const std::vector<LotRow>& lots) override {
    std::lock_guard<std::mutex> lock(mu_);
    return MemoryStore::WriteLots(lots);
  }

  void Hold() {
    std::lock_guard<std::mutex> lock(mu_);
    open_ = false;
  }
  void Release() {
    std::lock_guard<std::mutex> lock(mu_);
    open_ = true;
    changed_.notify_all();
  }
  void Fail(int count) {
    std::lock_guard<std::mutex> lock(mu_);
    FailNextWrites(count, "disk I/O error (injected)");
  }
  // Waits until WriteBatch has been entered `calls` times in all.
  bool WaitBatchCalls(int calls) {
    std::unique_lock<std::mutex> lock(mu_);
    return changed_.wait_for(lock, 5s, [&] { return batch_calls_ >= calls; });
  }
  std::vector<std::int64_t> SampleIndexes() {
    std::lock_guard<std::mutex> lock(mu_);
    std::vector<std::int64_t> out;
    for (const SampleRow& s : samples()) out.push_back(s.record_index);
    return out;
  }
  std::vector<std::int64_t> EventIndexes() {
    std::lock_guard<std::mutex> lock(mu_);
    std::vector<std::int64_t> out;
    for (const EventRow& e : events()) out.push_back(e.finding.at);
    return out;
  }
  std::size_t LotCount() {
    std::lock_guard<std::mutex> lock(mu_);
    return lots().size();
  }

 private:
  std::mutex mu_;
  std::condition_variable changed_;
  bool open_ = true;
  int batch_calls_ = 0;
};

SampleRow Sample(std::int64_t index) {
  SampleRow row;
  row.line = "oats-1";
  row.source = "tcp:127.0.0.1:41234";
  row.record_index = index;
  row.time_ms = 1772431200000 + 500 * index;
  row.grams = 500.0 + static_cast<double>(index % 7);
  row.head = static_cast<int>(index % 12);
  return row;
}

EventRow Event(std::int64_t index) {
  EventRow row;
  row.finding.line = "oats-1";
  row.finding.at = index;
  row.message = "test event";
  row.source = "tcp:127.0.0.1:41234";
  return row;
}

LotRow Lot(int seq) {
  LotRow row;
  row.lot.line = "oats-1";
  row.lot.seq = seq;
  row.lot.lot_id = "oats-1-" + std::to_string(seq);
  row.source = "heftd";
  return row;
}

std::vector<std::int64_t> Range(std::int64_t first, std::int64_t end) {
  std::vector<std::int64_t> out;
  for (std::int64_t i = first; i < end; ++i) out.push_back(i);
  return out;
}

// Sends spdlog's default logger to a string for the test's lifetime.
class CapturedLog {
 public:
  CapturedLog() : previous_(spdlog::default_logger()) {
    auto sink = std::make_shared<spdlog::sinks::ostream_sink_st>(text_);
    spdlog::set_default_logger(std::make_shared<spdlog::logger>("test", sink));
  }
  ~CapturedLog() { spdlog::set_default_logger(previous_); }
  std::string text() const { return text_.str(); }
  int Count(const std::string& what) const {
    const std::string all = text_.str();
    int n = 0;
    for (auto at = all.find(what); at != std::string::npos; at = all.find(what, at + 1)) ++n;
    return n;
  }

 private:
  std::ostringstream text_;
  std::shared_ptr<spdlog::logger> previous_;
};

BatchWriterOptions Options(std::size_t batch_max_rows, int flush_interval_ms = 60'000) {
  BatchWriterOptions o;
  o.batch_max_rows = batch_max_rows;
  o.flush_interval_ms = flush_interval_ms;
  return o;
}

}  // namespace

TEST_CASE("BatchWriter: Flush commits events, samples and lots in order", "[batch_writer]") {
  boost::asio::io_context io;
  SharedStore store;
  BatchWriter writer(io, store, Options(1000));
  writer.Start();
  for (int i = 0; i < 30; ++i) writer.AddSample(Sample(i));
  writer.AddEvent(Event(7));
  writer.AddLot(Lot(1));
  writer.AddEvent(Event(9));
  REQUIRE(writer.Flush());
  CHECK(store.SampleIndexes() == Range(0, 30));
  CHECK(store.EventIndexes() == std::vector<std::int64_t>{7, 9});
  CHECK(store.LotCount() == 1);
  const BatchWriter::Counters c = writer.counters();
  CHECK(c.samples_written == 30);
  CHECK(c.events_written == 2);
  CHECK(c.lots_written == 1);
  CHECK(writer.queued_samples() == 0);
  CHECK(writer.queued_events() == 0);
  CHECK(writer.queued_lots() == 0);
  writer.Stop();
}

TEST_CASE("BatchWriter: a full batch goes to the writer thread without the timer",
          "[batch_writer]") {
  boost::asio::io_context io;  // never run: the timer cannot fire
  SharedStore store;
  BatchWriter writer(io, store, Options(10));
  writer.Start();
  for (int i = 0; i < 25; ++i) writer.AddSample(Sample(i));
  // Two full batches of 10 were handed over; the last 5 wait for more or the timer.
  REQUIRE(store.WaitBatchCalls(2));
  writer.Stop();  // writes the 5 on this thread
  CHECK(store.SampleIndexes() == Range(0, 25));
}

TEST_CASE("BatchWriter: the timer hands over a part batch", "[batch_writer]") {
  boost::asio::io_context io;
  SharedStore store;
  BatchWriter writer(io, store, Options(1000, 20));
  writer.Start();
  for (int i = 0; i < 3; ++i) writer.AddSample(Sample(i));
  io.run_for(100ms);
  REQUIRE(store.WaitBatchCalls(1));
  // The writer has entered WriteBatch; Flush() waits until it is committed.
  REQUIRE(writer.Flush());
  CHECK(store.SampleIndexes() == Range(0, 3));
  writer.Stop();
}

TEST_CASE("BatchWriter: a full batch waits while the writer commits the previous one",
          "[batch_writer]") {
  // Double buffering bounds what is uncommitted to two batches: the one being
  // written and the one being filled (README: what kill -9 may lose).
  boost::asio::io_context io;
  SharedStore store;
  BatchWriter writer(io, store, Options(10));
  writer.Start();
  store.Hold();  // a slow disk
  std::atomic<int> returned{0};
  std::thread ingest([&] {
    for (int i = 0; i < 25; ++i) {
      writer.AddSample(Sample(i));
      returned.store(i + 1);
    }
  });
  REQUIRE(store.WaitBatchCalls(1));  // the first 10 are being written
  std::this_thread::sleep_for(200ms);
  // The 20th sample filled the second batch: its AddSample waits for the first write.
  CHECK(returned.load() == 19);
  store.Release();
  ingest.join();
  CHECK(returned.load() == 25);
  REQUIRE(writer.Flush());
  CHECK(store.SampleIndexes() == Range(0, 25));
  writer.Stop();
}

TEST_CASE("BatchWriter: failed writes hold every row, log once and recover in order",
          "[batch_writer]") {
  CapturedLog log;
  boost::asio::io_context io;
  SharedStore store;
  BatchWriter writer(io, store, Options(1000));
  writer.Start();
  store.Fail(2);
  for (int i = 0; i < 5; ++i) writer.AddSample(Sample(i));
  writer.AddEvent(Event(3));
  CHECK_FALSE(writer.Flush());
  CHECK(writer.failing());
  CHECK(writer.queued_samples() == 5);
  CHECK(writer.queued_events() == 1);
  for (int i = 5; i < 8; ++i) writer.AddSample(Sample(i));
  writer.AddEvent(Event(6));
  CHECK_FALSE(writer.Flush());  // the second injected failure
  CHECK(writer.failing());
  CHECK(writer.Flush());
  CHECK_FALSE(writer.failing());
  CHECK(store.SampleIndexes() == Range(0, 8));
  CHECK(store.EventIndexes() == std::vector<std::int64_t>{3, 6});
  const BatchWriter::Counters c = writer.counters();
  CHECK(c.failed_writes == 2);
  CHECK(c.samples_written == 8);
  CHECK(c.events_written == 2);
  io.poll();  // the writer thread posts its log lines to the io thread
  CHECK(log.Count("storage: write failed: memory store: disk I/O error (injected)") == 1);
  CHECK(log.Count("storage: writes recovered after 2 failed attempts") == 1);
  writer.Stop();
}

TEST_CASE("BatchWriter: Flush during a failing retry waits for that retry only", "[batch_writer]") {
  boost::asio::io_context io;
  SharedStore store;
  BatchWriter writer(io, store, Options(1000, 50));  // first retry 50 ms after a failure
  writer.Start();
  store.Fail(1000);
  writer.AddSample(Sample(0));
  CHECK_FALSE(writer.Flush());  // batch call 1 fails
  store.Hold();
  REQUIRE(store.WaitBatchCalls(2));  // the writer's own retry, held at the gate
  std::thread release([&] {
    std::this_thread::sleep_for(100ms);
    store.Release();
  });
  writer.AddSample(Sample(1));
  CHECK_FALSE(writer.Flush());                  // answered by retry 2, which fails
  CHECK(writer.counters().failed_writes == 2);  // no third attempt of its own
  release.join();
  CHECK(writer.queued_samples() == 2);
  store.Fail(0);
  REQUIRE(writer.Flush());
  CHECK(store.SampleIndexes() == Range(0, 2));
  writer.Stop();
}

TEST_CASE("BatchWriter: while failing, samples beyond the cap are dropped, events kept",
          "[batch_writer]") {
  CapturedLog log;
  boost::asio::io_context io;
  SharedStore store;
  BatchWriterOptions options = Options(10);
  options.max_queued_samples = 20;
  BatchWriter writer(io, store, options);
  writer.Start();
  store.Fail(1000);
  for (int i = 0; i < 50; ++i) {
    writer.AddSample(Sample(i));
    if (i % 10 == 0) writer.AddEvent(Event(i));
  }
  CHECK_FALSE(writer.Flush());
  CHECK(writer.queued_samples() == 20);
  CHECK(writer.queued_events() == 5);
  CHECK(writer.counters().samples_dropped == 30);
  CHECK(log.Count("storage: sample queue full") == 1);
  store.Fail(0);
  REQUIRE(writer.Flush());
  CHECK(store.SampleIndexes() == Range(0, 20));
  CHECK(store.EventIndexes() == std::vector<std::int64_t>{0, 10, 20, 30, 40});
  io.poll();
  CHECK(log.Count("20 samples; 30 samples were dropped meanwhile") == 1);
  writer.Stop();
}

TEST_CASE("BatchWriter: lots fail in their own transaction", "[batch_writer]") {
  boost::asio::io_context io;
  SharedStore store;
  BatchWriter writer(io, store, Options(1000));
  writer.Start();
  writer.AddEvent(Event(1));
  REQUIRE(writer.Flush());
  writer.AddLot(Lot(1));
  store.Fail(1);  // WriteLots is the only write of this flush
  CHECK_FALSE(writer.Flush());
  CHECK(writer.queued_lots() == 1);
  CHECK_FALSE(writer.failing());  // events and samples still get written
  writer.AddEvent(Event(2));
  REQUIRE(writer.Flush());
  CHECK(store.EventIndexes() == std::vector<std::int64_t>{1, 2});
  CHECK(store.LotCount() == 1);
  CHECK(writer.counters().failed_lot_writes == 1);
  writer.Stop();
}

TEST_CASE("BatchWriter: Stop writes what is queued; a failing last write is logged",
          "[batch_writer]") {
  CapturedLog log;
  boost::asio::io_context io;
  SharedStore store;
  {
    BatchWriter writer(io, store, Options(1000));
    writer.Start();
    for (int i = 0; i < 7; ++i) writer.AddSample(Sample(i));
    writer.AddLot(Lot(1));
    writer.Stop();
    CHECK(store.SampleIndexes() == Range(0, 7));
    CHECK(store.LotCount() == 1);
  }
  BatchWriter writer(io, store, Options(1000));
  writer.Start();
  writer.AddEvent(Event(1));
  writer.AddSample(Sample(7));
  store.Fail(1);
  writer.Stop();
  CHECK(writer.queued_events() == 1);
  CHECK(writer.queued_samples() == 1);
  CHECK(log.Count("storage: final write failed; 1 events, 1 samples and 0 lots") == 1);
}

}  // namespace heft
