#include "core/monitor/stream_ingest.h"

#include <cstdio>
#include <utility>

namespace heft {
namespace {
constexpr std::size_t kExcerptBytes = 48;

std::string Excerpt(std::string_view text) {
  std::string out;
  for (std::size_t i = 0; i < text.size() && i < kExcerptBytes; ++i) {
    const auto c = static_cast<unsigned char>(text[i]);
    if (c < 0x20 || c >= 0x7F) {
      char hex[5];
      std::snprintf(hex, sizeof hex, "\\x%02X", c);
      out += hex;
    } else {
      out += static_cast<char>(c);
    }
  }
  if (text.size() > kExcerptBytes) out += "...";
  return out;
}
}  // namespace

StreamIngest::StreamIngest(Plant& plant, IngestListener& listener, std::size_t max_record)
    : plant_(plant), listener_(listener), framer_(max_record) {}

void StreamIngest::Feed(std::string_view bytes, std::int64_t arrival_ms,
                        std::vector<Finding>* out) {
  framer_.Feed(
      bytes, [&](std::string_view text) { OnRecord(text, arrival_ms, out); },
      [&](std::size_t n) { OnTooLong(n); });
}

void StreamIngest::Finish(std::int64_t arrival_ms, std::vector<Finding>* out) {
  framer_.Finish([&](std::string_view text) { OnRecord(text, arrival_ms, out); },
                 [&](std::size_t n) { OnTooLong(n); });
}

void StreamIngest::OnRecord(std::string_view text, std::int64_t arrival_ms,
                            std::vector<Finding>* out) {
  if (header_allowed_) {
    header_allowed_ = false;
    if (format_ ? format_->TakeHeader(text) : IsNativeHeader(text)) return;
  }
  RecordView record;
  const RecordParse parse =
      format_ ? format_->Parse(text, &record) : ParseNativeRecord(text, &record);
  const std::int64_t index = counters_.records++;
  if (!parse.ok()) {
    if (parse.error == RecordError::kEmpty) {  // white space only: not a record after all
      --counters_.records;
      return;
    }
    ++counters_.malformed;
    listener_.OnProblem(
        {index, parse.error, parse.field, text.size(), Excerpt(text), parse.field_name});
    return;
  }
  if (plant_.Accept(record, index, arrival_ms, out) != Plant::Accepted::kYes) {
    ++counters_.refused;
    return;
  }
  ++counters_.accepted;
  Pack pack;
  pack.index = index;
  pack.time_ms = record.has_time ? record.time_ms : arrival_ms;
  pack.grams = record.grams;
  pack.head = record.head;
  pack.status = record.status;
  listener_.OnPack(record.line, pack);
}

void StreamIngest::SetFormat(std::unique_ptr<RecordFormat> format, std::size_t max_record) {
  format_ = std::move(format);
  framer_ = LineFramer(max_record);
}

void StreamIngest::Restart() {
  header_allowed_ = true;
  if (format_) format_->Reset();
  const std::size_t dropped = framer_.Discard();
  if (dropped == 0) return;
  const std::int64_t index = counters_.records++;
  ++counters_.malformed;
  listener_.OnProblem({index, RecordError::kTruncated, -1, dropped, std::string(), {}});
}

void StreamIngest::OnTooLong(std::size_t bytes) {
  header_allowed_ = false;
  const std::int64_t index = counters_.records++;
  ++counters_.malformed;
  listener_.OnProblem({index, RecordError::kTooLong, -1, bytes, std::string(), {}});
}

}  // namespace heft
