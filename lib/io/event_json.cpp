// event_json.cpp — FindingToJson and the JSON string escaper.
//
// Written by hand rather than through a JSON library so that key order and
// number formatting are fixed byte for byte (the `replay --events-out` contract).
#include "io/event_json.h"

#include <cmath>
#include <cstdint>
#include <iterator>

#include <fmt/format.h>

#include "core/record/native_record.h"

namespace heft {
namespace {

constexpr char kHex[] = "0123456789abcdef";

void AppendEscapedByte(unsigned char byte, std::string* out) {
  out->append("\\u00");
  out->push_back(kHex[byte >> 4]);
  out->push_back(kHex[byte & 0xf]);
}

bool IsContinuation(unsigned char byte) { return (byte & 0xc0) == 0x80; }

// Length of the well-formed UTF-8 sequence starting at text[i] (lead byte
// >= 0x80), or 0 if it is not one. Follows the table of well-formed byte
// sequences in the Unicode Standard, ch. 3 (no overlongs, no surrogates,
// nothing above U+10FFFF).
std::size_t Utf8SequenceLength(std::string_view text, std::size_t i) {
  const auto at = [&](std::size_t k) -> int {
    return i + k < text.size() ? static_cast<unsigned char>(text[i + k]) : -1;
  };
  const int b0 = at(0);
  const auto cont = [&](std::size_t k) { return at(k) >= 0 && IsContinuation(at(k)); };
  if (b0 >= 0xc2 && b0 <= 0xdf) return cont(1) ? 2 : 0;
  if (b0 >= 0xe0 && b0 <= 0xef) {
    const int b1 = at(1);
    const int lo = b0 == 0xe0 ? 0xa0 : 0x80;
    const int hi = b0 == 0xed ? 0x9f : 0xbf;
    return (b1 >= lo && b1 <= hi && cont(2)) ? 3 : 0;
  }
  if (b0 >= 0xf0 && b0 <= 0xf4) {
    const int b1 = at(1);
    const int lo = b0 == 0xf0 ? 0x90 : 0x80;
    const int hi = b0 == 0xf4 ? 0x8f : 0xbf;
    return (b1 >= lo && b1 <= hi && cont(2) && cont(3)) ? 4 : 0;
  }
  return 0;
}

void AppendKey(std::string_view key, std::string* out) {
  out->push_back(',');
  AppendJsonString(key, out);
  out->push_back(':');
}

void AppendInt(std::int64_t value, std::string* out) {
  fmt::format_to(std::back_inserter(*out), "{}", value);
}

void AppendOptInt(const std::optional<std::int64_t>& value, std::string* out) {
  if (value) {
    AppendInt(*value, out);
  } else {
    out->append("null");
  }
}

void AppendTime(std::int64_t time_ms, std::string* out) {
  char buffer[32];
  FormatTimeMs(time_ms, buffer);
  AppendJsonString(buffer, out);
}

// Optional doubles: the key is written only for a finite value (an unknown or
// non-finite figure is left out, as JSON has no NaN). Fixed 3 decimals; a
// negative zero is written as 0.000 so equal values print equally.
void AppendOptDouble(std::string_view key, const std::optional<double>& value, std::string* out) {
  if (!value || !std::isfinite(*value)) return;
  AppendKey(key, out);
  const std::string text = fmt::format("{:.3f}", *value);
  out->append(text == "-0.000" ? std::string_view("0.000") : std::string_view(text));
}

}  // namespace

void AppendJsonString(std::string_view text, std::string* out) {
  out->push_back('"');
  std::size_t i = 0;
  while (i < text.size()) {
    const auto byte = static_cast<unsigned char>(text[i]);
    if (byte >= 0x80) {
      const std::size_t length = Utf8SequenceLength(text, i);
      if (length == 0) {
        AppendEscapedByte(byte, out);  // invalid UTF-8: keep the byte visible, stay valid JSON
        ++i;
      } else {
        out->append(text.substr(i, length));
        i += length;
      }
      continue;
    }
    switch (byte) {
      case '"':
        out->append("\\\"");
        break;
      case '\\':
        out->append("\\\\");
        break;
      case '\n':
        out->append("\\n");
        break;
      case '\r':
        out->append("\\r");
        break;
      case '\t':
        out->append("\\t");
        break;
      case '\b':
        out->append("\\b");
        break;
      case '\f':
        out->append("\\f");
        break;
      default:
        if (byte < 0x20 || byte == 0x7f) {
          AppendEscapedByte(byte, out);
        } else {
          out->push_back(static_cast<char>(byte));
        }
    }
    ++i;
  }
  out->push_back('"');
}

std::string FindingToJson(const Finding& finding, std::string_view message) {
  std::string out;
  out.reserve(256 + message.size());
  out.append("{\"event\":");
  AppendJsonString(TransitionName(finding.transition), &out);
  AppendKey("kind", &out);
  AppendJsonString(KindName(finding.kind), &out);
  AppendKey("line", &out);
  AppendJsonString(finding.line, &out);
  AppendKey("at", &out);
  AppendInt(finding.at, &out);
  AppendKey("onset", &out);
  AppendOptInt(finding.onset, &out);
  AppendKey("end", &out);
  AppendOptInt(finding.end, &out);
  AppendKey("severity", &out);
  AppendJsonString(SeverityName(finding.severity), &out);
  AppendKey("message", &out);
  AppendJsonString(message, &out);
  // Extra fields, each only when known.
  AppendKey("at_time", &out);
  AppendTime(finding.at_time_ms, &out);
  if (finding.onset_time_ms) {
    AppendKey("onset_time", &out);
    AppendTime(*finding.onset_time_ms, &out);
  }
  AppendOptDouble("size_g", finding.size_g, &out);
  AppendOptDouble("size_sigma", finding.size_sigma, &out);
  AppendOptDouble("level_g", finding.level_g, &out);
  AppendOptDouble("period_packs", finding.period_packs, &out);
  AppendOptDouble("period_s", finding.period_s, &out);
  AppendOptDouble("slope_g_per_h", finding.slope_g_per_h, &out);
  if (finding.head) {
    AppendKey("head", &out);
    AppendInt(*finding.head, &out);
  }
  if (!finding.detector.empty()) {
    AppendKey("detector", &out);
    AppendJsonString(finding.detector, &out);
  }
  out.push_back('}');
  return out;
}

}  // namespace heft
