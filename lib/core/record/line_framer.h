// line_framer.h — splits a byte stream into records at LF, CR or CRLF.
//
// Pure and incremental: feed it chunks of any size; it calls back with each
// complete record (terminator removed). A record longer than the maximum is
// discarded up to its next terminator and reported once. Empty records (blank
// lines, the LF of a CRLF split across chunks) are not reported. One framer
// per stream; not thread-safe.
#pragma once

#include <bit>
#include <cstddef>
#include <cstdint>
#include <cstring>
#include <string>
#include <string_view>
#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace heft {

class LineFramer {
 public:
  // Index of the first LF or CR at or after `pos`, or bytes.size(). Sixteen bytes at a
  // time with SSE2 compares (every x86-64 has them), else eight at a time with exact
  // per-byte zero masks (no carries between bytes): records are short, so a library
  // memchr's call overhead would cost more than it saves.
  static std::size_t FindTerminator(std::string_view bytes, std::size_t pos) {
    const std::size_t n = bytes.size();
#if defined(__SSE2__)
    const __m128i lf = _mm_set1_epi8('\n'), cr = _mm_set1_epi8('\r');
    for (; pos + 16 <= n; pos += 16) {
      const __m128i x = _mm_loadu_si128(reinterpret_cast<const __m128i*>(bytes.data() + pos));
      const int hits =
          _mm_movemask_epi8(_mm_or_si128(_mm_cmpeq_epi8(x, lf), _mm_cmpeq_epi8(x, cr)));
      if (hits != 0)
        return pos + static_cast<std::size_t>(std::countr_zero(static_cast<unsigned>(hits)));
    }
#else
    static_assert(std::endian::native == std::endian::little, "FindTerminator reads words");
    constexpr std::uint64_t kOnes = 0x0101010101010101ULL, kLows = 0x7F7F7F7F7F7F7F7FULL;
    for (; pos + 8 <= n; pos += 8) {
      std::uint64_t x;
      std::memcpy(&x, bytes.data() + pos, 8);
      const std::uint64_t lf = x ^ (kOnes * '\n'), cr = x ^ (kOnes * '\r');
      const std::uint64_t hits =
          ~(((lf & kLows) + kLows) | lf | kLows) | ~(((cr & kLows) + kLows) | cr | kLows);
      if (hits != 0) return pos + static_cast<std::size_t>(std::countr_zero(hits)) / 8;
    }
#endif
    while (pos < n && bytes[pos] != '\n' && bytes[pos] != '\r') ++pos;
    return pos;
  }

  static constexpr std::size_t kDefaultMaxRecord = 4096;  // bytes, without terminator

  explicit LineFramer(std::size_t max_record = kDefaultMaxRecord) : max_record_(max_record) {}

  // Calls on_record(std::string_view) for each complete record and
  // on_too_long(std::size_t dropped_bytes) once per over-long record, when its
  // terminator arrives. Views passed to on_record are valid during the call only.
  template <class OnRecord, class OnTooLong>
  void Feed(std::string_view bytes, OnRecord&& on_record, OnTooLong&& on_too_long);

  // At end of stream: a pending unterminated record is delivered as if terminated.
  template <class OnRecord, class OnTooLong>
  void Finish(OnRecord&& on_record, OnTooLong&& on_too_long);

  std::size_t pending_bytes() const { return partial_.size(); }

  // Drops an unterminated record (the stream was cut: disconnect, rotated or
  // truncated file) and returns how many bytes it had so far (0 if none).
  std::size_t Discard() {
    const std::size_t dropped = dropping_ > 0 ? dropping_ : partial_.size();
    partial_.clear();
    dropping_ = 0;
    last_was_cr_ = false;
    return dropped;
  }

 private:
  std::size_t max_record_;
  std::string partial_;       // bytes of an unterminated record carried across chunks
  std::size_t dropping_ = 0;  // >0 while discarding an over-long record (bytes so far)
  bool last_was_cr_ = false;  // to swallow the LF of a CRLF split across chunks
};

template <class OnRecord, class OnTooLong>
void LineFramer::Feed(std::string_view bytes, OnRecord&& on_record, OnTooLong&& on_too_long) {
  std::size_t pos = 0;
  const std::size_t n = bytes.size();
  if (last_was_cr_ && n > 0 && bytes[0] == '\n') pos = 1;
  last_was_cr_ = false;
  while (pos < n) {
    std::size_t end = FindTerminator(bytes, pos);
    const std::string_view piece = bytes.substr(pos, end - pos);
    if (end == n) {  // no terminator in the rest of this chunk: carry it
      if (dropping_ > 0) {
        dropping_ += piece.size();
      } else if (partial_.size() + piece.size() > max_record_) {
        dropping_ = partial_.size() + piece.size();
        partial_.clear();
      } else {
        partial_.append(piece);
      }
      return;
    }
    if (dropping_ > 0) {
      on_too_long(dropping_ + piece.size());
      dropping_ = 0;
    } else if (!partial_.empty()) {
      if (partial_.size() + piece.size() > max_record_) {
        on_too_long(partial_.size() + piece.size());
      } else {
        partial_.append(piece);
        on_record(std::string_view(partial_));
      }
      partial_.clear();
    } else if (piece.size() > max_record_) {
      on_too_long(piece.size());
    } else if (!piece.empty()) {
      on_record(piece);
    }
    // Swallow the LF of a CRLF pair, even when it arrives in the next chunk.
    if (bytes[end] == '\r') {
      if (end + 1 < n) {
        if (bytes[end + 1] == '\n') ++end;
      } else {
        last_was_cr_ = true;
      }
    }
    pos = end + 1;
  }
}

template <class OnRecord, class OnTooLong>
void LineFramer::Finish(OnRecord&& on_record, OnTooLong&& on_too_long) {
  if (dropping_ > 0) {
    on_too_long(dropping_);
  } else if (!partial_.empty()) {
    on_record(std::string_view(partial_));
  }
  partial_.clear();
  dropping_ = 0;
  last_was_cr_ = false;
}

}  // namespace heft
