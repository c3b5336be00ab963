#include "stdin_source.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <utility>

#include <spdlog/spdlog.h>
#include <boost/asio/error.hpp>
#include <boost/asio/post.hpp>

#include "line_engine.h"

namespace heft {
namespace {
constexpr std::size_t kReadBufferBytes = 64 * 1024;
}  // namespace

StdinSource::StdinSource(boost::asio::io_context& io, LineEngine& engine, SourceSettings settings,
                         std::unique_ptr<RecordFormat> format)
    : io_(io),
      settings_(std::move(settings)),
      stream_(io),
      ingest_(engine.OpenSource(settings_.name)),
      buffer_(kReadBufferBytes) {
  ingest_->UseFormat(std::move(format), settings_.max_record_bytes);
}

StdinSource::~StdinSource() {
  if (file_fd_ >= 0) ::close(file_fd_);
}

Status StdinSource::Start() {
  const int fd = ::fcntl(STDIN_FILENO, F_DUPFD_CLOEXEC, 3);
  if (fd < 0) {
    return Status::Error("source " + name() +
                         ": cannot use standard input: " + std::strerror(errno));
  }
  struct stat st {};
  if (::fstat(fd, &st) == 0 && S_ISREG(st.st_mode)) {
    file_fd_ = fd;
    spdlog::info("source {}: reading standard input (a file)", name());
    boost::asio::post(io_, [this] { ReadFileChunk(); });
    return Status::Ok();
  }
  boost::system::error_code ec;
  stream_.assign(fd, ec);
  if (ec) {
    ::close(fd);
    return Status::Error("source " + name() + ": cannot read standard input: " + ec.message());
  }
  spdlog::info("source {}: reading standard input", name());
  DoRead();
  return Status::Ok();
}

void StdinSource::DoRead() {
  stream_.async_read_some(
      boost::asio::buffer(buffer_), [this](const boost::system::error_code& ec, std::size_t bytes) {
        if (ended_ || ec == boost::asio::error::operation_aborted) return;
        if (bytes > 0) ingest_->Feed(std::string_view(buffer_.data(), bytes));
        if (!ec) {
          DoRead();
          return;
        }
        End(ec == boost::asio::error::eof ? "end of input" : "read error: " + ec.message());
      });
}

void StdinSource::ReadFileChunk() {
  if (ended_) return;
  const ssize_t n = ::read(file_fd_, buffer_.data(), buffer_.size());
  if (n < 0 && errno == EINTR) {
    boost::asio::post(io_, [this] { ReadFileChunk(); });
    return;
  }
  if (n < 0) {
    End(std::string("read error: ") + std::strerror(errno));
    return;
  }
  if (n == 0) {
    End("end of input");
    return;
  }
  ingest_->Feed(std::string_view(buffer_.data(), static_cast<std::size_t>(n)));
  boost::asio::post(io_, [this] { ReadFileChunk(); });
}

void StdinSource::End(const std::string& why) {
  if (ended_) return;
  ended_ = true;
  ingest_->Finish();
  boost::system::error_code ignored;
  stream_.close(ignored);
  const IngestCounters& c = ingest_->counters();
  spdlog::info("source {} ended ({}): {} records: {} accepted, {} malformed, {} refused", name(),
               why, c.records, c.accepted, c.malformed, c.refused);
}

void StdinSource::Stop() {
  if (ended_) return;
  boost::system::error_code ignored;
  stream_.cancel(ignored);
  End("daemon stopping");
}

}  // namespace heft
