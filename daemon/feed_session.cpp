#include "feed_session.h"

#include <utility>

#include <spdlog/spdlog.h>
#include <boost/asio/error.hpp>

namespace heft {

FeedSession::FeedSession(boost::asio::ip::tcp::socket socket, std::unique_ptr<IngestSource> source,
                         Owner& owner)
    : socket_(std::move(socket)),
      source_(std::move(source)),
      owner_(owner),
      buffer_(kReadBufferBytes),
      started_(std::chrono::steady_clock::now()) {}

void FeedSession::Start() { DoRead(); }

void FeedSession::DoRead() {
  socket_.async_read_some(
      boost::asio::buffer(buffer_),
      [self = shared_from_this()](const boost::system::error_code& ec, std::size_t bytes) {
        self->OnRead(ec, bytes);
      });
}

void FeedSession::OnRead(const boost::system::error_code& ec, std::size_t bytes) {
  // Stopped meanwhile: a completion already queued must not feed a finished ingest.
  if (ended_ || ec == boost::asio::error::operation_aborted) return;
  if (bytes > 0) {
    bytes_read_ += static_cast<std::int64_t>(bytes);
    source_->Feed(std::string_view(buffer_.data(), bytes));
  }
  if (!ec) {
    DoRead();
    return;
  }
  if (ec == boost::asio::error::eof) {
    End("closed by peer");
  } else {
    End("read error: " + ec.message());
  }
  boost::system::error_code ignored;
  socket_.close(ignored);
  owner_.OnSessionEnded(shared_from_this());
}

void FeedSession::Stop() {
  if (ended_) return;
  End("daemon stopping");
  boost::system::error_code ignored;
  socket_.shutdown(boost::asio::ip::tcp::socket::shutdown_both, ignored);
  socket_.close(ignored);
}

void FeedSession::End(std::string_view why) {
  ended_ = true;
  source_->Finish();
  const IngestCounters& c = source_->counters();
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started_).count();
  const double rate = seconds > 0.0 ? static_cast<double>(c.records) / seconds : 0.0;
  spdlog::info(
      "session {} ended ({}): {} records: {} accepted, {} malformed, {} refused; {} bytes "
      "in {:.3f} s ({:.0f} records/s)",
      name(), why, c.records, c.accepted, c.malformed, c.refused, bytes_read_, seconds, rate);
}

}  // namespace heft
