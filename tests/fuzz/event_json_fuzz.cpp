// event_json_fuzz.cpp — fuzz target for the JSON paths (io/event_json.h): a Finding made
// from the input's bytes (line id, message, detector, times, figures) is written with
// FindingToJson and read back with nlohmann::json. The output must always parse, and the
// strings must come back as written: valid UTF-8 unchanged, each byte of an invalid
// sequence as the character U+0000..U+00FF of that byte's value (the documented \u00XX
// escape). The expected text is computed here by an independent UTF-8 decoder.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstring>
#include <string>
#include <string_view>

#include <nlohmann/json.hpp>

#include "core/model/finding.h"
#include "fuzz_check.h"
#include "io/event_json.h"

namespace {

class Reader {
 public:
  Reader(const std::uint8_t* data, std::size_t size) : data_(data), size_(size) {}
  template <class T>
  T Take() {
    T value{};
    if (pos_ + sizeof(T) <= size_) {
      std::memcpy(&value, data_ + pos_, sizeof(T));
      pos_ += sizeof(T);
    }
    return value;
  }
  // A string up to the next 0xff byte (or the end).
  std::string TakeString() {
    std::string out;
    while (pos_ < size_ && data_[pos_] != 0xff) out.push_back(static_cast<char>(data_[pos_++]));
    if (pos_ < size_) ++pos_;
    return out;
  }

 private:
  const std::uint8_t* data_;
  std::size_t size_;
  std::size_t pos_ = 0;
};

void AppendUtf8(std::uint32_t cp, std::string* out) {
  if (cp < 0x80) {
    out->push_back(static_cast<char>(cp));
  } else if (cp < 0x800) {
    out->push_back(static_cast<char>(0xc0 | (cp >> 6)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3f)));
  } else if (cp < 0x10000) {
    out->push_back(static_cast<char>(0xe0 | (cp >> 12)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 6) & 0x3f)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3f)));
  } else {
    out->push_back(static_cast<char>(0xf0 | (cp >> 18)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 12) & 0x3f)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 6) & 0x3f)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3f)));
  }
}

// Decodes one code point at text[i]; 0 when the bytes are not well-formed UTF-8
// (overlong forms, surrogates and values above U+10FFFF are not).
std::size_t Decode(std::string_view text, std::size_t i, std::uint32_t* cp) {
  const auto b = [&](std::size_t k) { return static_cast<unsigned char>(text[i + k]); };
  const unsigned char b0 = b(0);
  std::size_t n;
  std::uint32_t v;
  if (b0 < 0x80) {
    *cp = b0;
    return 1;
  } else if ((b0 & 0xe0) == 0xc0) {
    n = 2;
    v = b0 & 0x1f;
  } else if ((b0 & 0xf0) == 0xe0) {
    n = 3;
    v = b0 & 0x0f;
  } else if ((b0 & 0xf8) == 0xf0) {
    n = 4;
    v = b0 & 0x07;
  } else {
    return 0;
  }
  if (i + n > text.size()) return 0;
  for (std::size_t k = 1; k < n; ++k) {
    if ((b(k) & 0xc0) != 0x80) return 0;
    v = (v << 6) | (b(k) & 0x3f);
  }
  static constexpr std::uint32_t kMin[] = {0, 0, 0x80, 0x800, 0x10000};
  if (v < kMin[n] || v > 0x10ffff || (v >= 0xd800 && v <= 0xdfff)) return 0;
  *cp = v;
  return n;
}

std::string Expected(std::string_view text) {
  std::string out;
  std::size_t i = 0;
  while (i < text.size()) {
    std::uint32_t cp;
    const std::size_t n = Decode(text, i, &cp);
    if (n == 0) {
      AppendUtf8(static_cast<unsigned char>(text[i]), &out);
      ++i;
    } else {
      out.append(text.substr(i, n));
      i += n;
    }
  }
  return out;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  Reader r(data, size);
  heft::Finding f;
  const auto flags = r.Take<std::uint16_t>();
  f.transition = (flags & 1) ? heft::Transition::kCleared : heft::Transition::kRaised;
  f.kind = static_cast<heft::FindingKind>((flags >> 1) % heft::kFindingKindCount);
  f.severity = static_cast<heft::Severity>((flags >> 5) % 3);
  f.at = r.Take<std::int64_t>();
  f.at_time_ms = r.Take<std::int64_t>();
  if (flags & (1 << 7)) f.onset = r.Take<std::int64_t>();
  if (flags & (1 << 8)) f.onset_time_ms = r.Take<std::int64_t>();
  if (flags & (1 << 9)) f.end = r.Take<std::int64_t>();
  if (flags & (1 << 10)) f.size_g = r.Take<double>();
  if (flags & (1 << 11)) f.size_sigma = r.Take<double>();
  if (flags & (1 << 12)) f.level_g = r.Take<double>();
  if (flags & (1 << 13)) f.period_s = r.Take<double>();
  if (flags & (1 << 14)) f.head = r.Take<int>();
  f.line = r.TakeString();
  f.detector = r.TakeString();
  const std::string message = r.TakeString();

  const std::string text = heft::FindingToJson(f, message);
  const nlohmann::json j = nlohmann::json::parse(text, nullptr, /*allow_exceptions=*/false);
  FUZZ_CHECK(!j.is_discarded());
  FUZZ_CHECK(j.is_object());
  FUZZ_CHECK(j.at("line").get<std::string>() == Expected(f.line));
  FUZZ_CHECK(j.at("message").get<std::string>() == Expected(message));
  FUZZ_CHECK(j.at("at").get<std::int64_t>() == f.at);
  FUZZ_CHECK(j.at("kind").get<std::string>() == heft::KindName(f.kind));
  if (f.onset) FUZZ_CHECK(j.at("onset").get<std::int64_t>() == *f.onset);
  if (!f.detector.empty()) FUZZ_CHECK(j.at("detector").get<std::string>() == Expected(f.detector));
  if (f.size_g) FUZZ_CHECK(j.contains("size_g") == std::isfinite(*f.size_g));
  if (f.head) FUZZ_CHECK(j.at("head").get<int>() == *f.head);
  return 0;
}
