#include "file_follow_source.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <utility>

#include <spdlog/spdlog.h>

#include "line_engine.h"

namespace heft {
namespace {
constexpr std::size_t kReadBufferBytes = 64 * 1024;
}  // namespace

FileFollowSource::FileFollowSource(boost::asio::io_context& io, LineEngine& engine,
                                   SourceSettings settings, std::unique_ptr<RecordFormat> format)
    : settings_(std::move(settings)),
      timer_(io),
      ingest_(engine.OpenSource(settings_.name)),
      buffer_(kReadBufferBytes) {
  ingest_->UseFormat(std::move(format), settings_.max_record_bytes);
}

FileFollowSource::~FileFollowSource() { CloseFile(); }

Status FileFollowSource::Start() {
  spdlog::info("source {}: following {} (poll every {} ms, start at {})", name(), settings_.path,
               settings_.poll_ms, settings_.start_at_end ? "end" : "beginning");
  OpenFile(settings_.start_at_end);
  next_due_ = std::chrono::steady_clock::now();
  Poll();
  return Status::Ok();
}

bool FileFollowSource::OpenFile(bool from_end) {
  const int fd = ::open(settings_.path.c_str(), O_RDONLY | O_CLOEXEC | O_NOCTTY);
  if (fd < 0) {
    if (!waiting_logged_) {
      waiting_logged_ = true;
      spdlog::warn("source {}: cannot open {}: {}; looking again every {} ms", name(),
                   settings_.path, std::strerror(errno), settings_.poll_ms);
    }
    return false;
  }
  struct stat st {};
  if (::fstat(fd, &st) != 0 || !S_ISREG(st.st_mode)) {
    ::close(fd);
    if (!waiting_logged_) {
      waiting_logged_ = true;
      spdlog::warn("source {}: {} is not a regular file; looking again every {} ms", name(),
                   settings_.path, settings_.poll_ms);
    }
    return false;
  }
  waiting_logged_ = false;
  fd_ = fd;
  device_ = st.st_dev;
  inode_ = st.st_ino;
  offset_ = 0;
  if (from_end) {
    const off_t end = ::lseek(fd_, 0, SEEK_END);
    if (end > 0) offset_ = end;
  }
  spdlog::info("source {}: opened {} (inode {}) at offset {}", name(), settings_.path,
               static_cast<unsigned long long>(inode_), offset_);
  return true;
}

void FileFollowSource::CloseFile() {
  if (fd_ >= 0) ::close(fd_);
  fd_ = -1;
}

bool FileFollowSource::ReadAvailable() {
  std::size_t total = 0;
  while (total < kMaxBytesPerPoll) {
    const ssize_t n = ::read(fd_, buffer_.data(), buffer_.size());
    if (n < 0) {
      if (errno == EINTR) continue;
      spdlog::warn("source {}: read error on {}: {}", name(), settings_.path, std::strerror(errno));
      return false;
    }
    if (n == 0) break;
    offset_ += n;
    total += static_cast<std::size_t>(n);
    ingest_->Feed(std::string_view(buffer_.data(), static_cast<std::size_t>(n)));
  }
  return true;
}

void FileFollowSource::Poll() {
  if (stopped_) return;
  if (fd_ < 0) {
    // Appeared since the last look: a new file is read from its beginning,
    // unless this is still the start-up open.
    OpenFile(false);
  }
  if (fd_ >= 0) {
    if (!ReadAvailable()) {
      ingest_->Restart();
      CloseFile();
    }
  }
  if (fd_ >= 0) {
    struct stat path_st {};
    struct stat fd_st {};
    const bool path_ok = ::stat(settings_.path.c_str(), &path_st) == 0;
    if (path_ok && (path_st.st_ino != inode_ || path_st.st_dev != device_)) {
      // Rotated: the old file is read to its end above; switch to the new one.
      ReadAvailable();
      spdlog::info("source {}: {} was replaced (rotation); reading the new file", name(),
                   settings_.path);
      ingest_->Restart();
      CloseFile();
      if (OpenFile(false)) ReadAvailable();
    } else if (::fstat(fd_, &fd_st) == 0 && fd_st.st_size < offset_) {
      spdlog::info("source {}: {} was truncated ({} → {} bytes); reading from its start", name(),
                   settings_.path, offset_, static_cast<long long>(fd_st.st_size));
      ingest_->Restart();
      ::lseek(fd_, 0, SEEK_SET);
      offset_ = 0;
      ReadAvailable();
    }
  }
  ArmTimer();
}

void FileFollowSource::ArmTimer() {
  next_due_ += std::chrono::milliseconds(settings_.poll_ms);
  const auto now = std::chrono::steady_clock::now();
  if (next_due_ < now) next_due_ = now;  // late: no burst of catch-up polls
  timer_.expires_at(next_due_);
  timer_.async_wait([this](const boost::system::error_code& ec) {
    if (!ec) Poll();
  });
}

void FileFollowSource::Stop() {
  if (stopped_) return;
  stopped_ = true;
  timer_.cancel();
  if (fd_ >= 0) ReadAvailable();  // what was written up to now still counts
  CloseFile();
  ingest_->Finish();
  const IngestCounters& c = ingest_->counters();
  spdlog::info("source {} stopped: {} records: {} accepted, {} malformed, {} refused", name(),
               c.records, c.accepted, c.malformed, c.refused);
}

}  // namespace heft
