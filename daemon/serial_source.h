// serial_source.h — a `serial` source: a checkweigher on a serial port
// (boost::asio::serial_port), usually one line per port (line_id).
//
// Opens the device, sets baud, data bits, parity, stop bits and flow control
// (Asio starts from raw mode: no echo, no CR/LF translation; the framer
// handles CR, LF and CRLF), then reads. A setting the device refuses is
// logged as an error and reading goes on with the device's own setting. If
// the device cannot be opened, or a read fails (USB adapter unplugged), it is closed and
// reopened with exponential backoff (backoff.h); a record cut off by the
// failure is counted as `truncated`. States are logged as `source NAME:
// state open|retrying`. Not thread-safe: io_context thread only.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include <boost/asio/io_context.hpp>
#include <boost/asio/serial_port.hpp>
#include <boost/asio/steady_timer.hpp>

#include "backoff.h"
#include "core/record/record_format.h"
#include "feed_source.h"
#include "ingest_source.h"
#include "io/source_settings.h"

namespace heft {

class LineEngine;

class SerialSource final : public FeedSource {
 public:
  SerialSource(boost::asio::io_context& io, LineEngine& engine, SourceSettings settings,
               std::unique_ptr<RecordFormat> format);

  Status Start() override;
  void Stop() override;
  const std::string& name() const override { return settings_.name; }

 private:
  void Open();
  // Applies every configured line setting; returns those refused, with why
  // ("" when all were taken).
  std::string Configure();
  void DoRead();
  void Retry(const std::string& why);

  SourceSettings settings_;
  boost::asio::serial_port port_;
  boost::asio::steady_timer timer_;
  std::unique_ptr<IngestSource> ingest_;
  Backoff backoff_;
  std::vector<char> buffer_;
  bool stopped_ = false;
};

}  // namespace heft
