#include "serial_source.h"

#include <chrono>
#include <utility>

#include <fmt/format.h>
#include <spdlog/spdlog.h>
#include <boost/asio/error.hpp>

#include "line_engine.h"

namespace heft {
namespace {
constexpr std::size_t kReadBufferBytes = 4096;  // a serial line is slow

const char* ParityName(SerialParity p) {
  switch (p) {
    case SerialParity::kNone:
      return "N";
    case SerialParity::kEven:
      return "E";
    case SerialParity::kOdd:
      return "O";
  }
  return "?";
}

const char* StopBitsName(SerialStopBits s) {
  switch (s) {
    case SerialStopBits::kOne:
      return "1";
    case SerialStopBits::kOnePointFive:
      return "1.5";
    case SerialStopBits::kTwo:
      return "2";
  }
  return "?";
}
}  // namespace

SerialSource::SerialSource(boost::asio::io_context& io, LineEngine& engine, SourceSettings settings,
                           std::unique_ptr<RecordFormat> format)
    : settings_(std::move(settings)),
      port_(io),
      timer_(io),
      ingest_(engine.OpenSource(settings_.name)),
      backoff_(std::chrono::milliseconds(settings_.retry_initial_ms),
               std::chrono::milliseconds(settings_.retry_max_ms)),
      buffer_(kReadBufferBytes) {
  ingest_->UseFormat(std::move(format), settings_.max_record_bytes);
}

Status SerialSource::Start() {
  Open();
  return Status::Ok();
}

std::string SerialSource::Configure() {
  using boost::asio::serial_port_base;
  std::string refused;
  auto note = [&](const char* what, const boost::system::error_code& ec) {
    if (!ec) return;
    if (!refused.empty()) refused += ", ";
    refused += std::string(what) + " (" + ec.message() + ")";
  };
  boost::system::error_code ec;
  port_.set_option(serial_port_base::baud_rate(static_cast<unsigned>(settings_.baud)), ec);
  note("baud", ec);
  port_.set_option(serial_port_base::character_size(static_cast<unsigned>(settings_.data_bits)),
                   ec);
  note("data_bits", ec);
  const auto parity = settings_.parity == SerialParity::kEven  ? serial_port_base::parity::even
                      : settings_.parity == SerialParity::kOdd ? serial_port_base::parity::odd
                                                               : serial_port_base::parity::none;
  port_.set_option(serial_port_base::parity(parity), ec);
  note("parity", ec);
  const auto stop = settings_.stop_bits == SerialStopBits::kTwo ? serial_port_base::stop_bits::two
                    : settings_.stop_bits == SerialStopBits::kOnePointFive
                        ? serial_port_base::stop_bits::onepointfive
                        : serial_port_base::stop_bits::one;
  port_.set_option(serial_port_base::stop_bits(stop), ec);
  note("stop_bits", ec);
  const auto flow = settings_.flow_control == SerialFlowControl::kSoftware
                        ? serial_port_base::flow_control::software
                    : settings_.flow_control == SerialFlowControl::kHardware
                        ? serial_port_base::flow_control::hardware
                        : serial_port_base::flow_control::none;
  port_.set_option(serial_port_base::flow_control(flow), ec);
  note("flow_control", ec);
  return refused;
}

void SerialSource::Open() {
  if (stopped_) return;
  boost::system::error_code ec;
  port_.open(settings_.device, ec);
  if (ec) {
    Retry("cannot open " + settings_.device + ": " + ec.message());
    return;
  }
  // A refused setting will not be accepted on a retry either, so read on
  // with the device's own setting and say so loudly: on a real port the
  // records then show up as malformed; a pseudo-terminal refuses 7 data
  // bits and parity but carries bytes unchanged.
  const std::string refused = Configure();
  if (!refused.empty()) {
    spdlog::error("source {}: {} refused settings: {}; reading with the device's current ones",
                  name(), settings_.device, refused);
  }
  backoff_.Reset();
  spdlog::info("source {}: state open {} {} {}{}{} flow {}", name(), settings_.device,
               settings_.baud, settings_.data_bits, ParityName(settings_.parity),
               StopBitsName(settings_.stop_bits),
               settings_.flow_control == SerialFlowControl::kNone       ? "none"
               : settings_.flow_control == SerialFlowControl::kSoftware ? "software"
                                                                        : "hardware");
  DoRead();
}

void SerialSource::DoRead() {
  port_.async_read_some(boost::asio::buffer(buffer_),
                        [this](const boost::system::error_code& ec, std::size_t bytes) {
                          if (stopped_ || ec == boost::asio::error::operation_aborted) return;
                          if (bytes > 0) ingest_->Feed(std::string_view(buffer_.data(), bytes));
                          if (!ec) {
                            DoRead();
                            return;
                          }
                          ingest_->Restart();
                          Retry("read failed: " + ec.message());
                        });
}

void SerialSource::Retry(const std::string& why) {
  boost::system::error_code ignored;
  port_.close(ignored);
  const auto delay = backoff_.Next();
  spdlog::warn("source {}: state retrying in {} ms (attempt {}): {}", name(), delay.count(),
               backoff_.attempts(), why);
  timer_.expires_after(delay);
  timer_.async_wait([this](const boost::system::error_code& ec) {
    if (!ec && !stopped_) Open();
  });
}

void SerialSource::Stop() {
  if (stopped_) return;
  stopped_ = true;
  timer_.cancel();
  boost::system::error_code ignored;
  port_.cancel(ignored);
  port_.close(ignored);
  ingest_->Finish();
  const IngestCounters& c = ingest_->counters();
  spdlog::info("source {} stopped: {} records: {} accepted, {} malformed, {} refused", name(),
               c.records, c.accepted, c.malformed, c.refused);
}

}  // namespace heft
