// event_json_test.cpp — the byte-exact JSON form of findings (replay contract)
// and the string escaper.
#include <limits>
#include <string>

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>

#include "io/event_json.h"

namespace heft {
namespace {

std::string Quoted(std::string_view text) {
  std::string out;
  AppendJsonString(text, &out);
  return out;
}

}  // namespace

TEST_CASE("FindingToJson: a raised finding, exact bytes", "[json]") {
  Finding f;
  f.transition = Transition::kRaised;
  f.kind = FindingKind::kShift;
  f.severity = Severity::kWarning;
  f.line = "oats-1";
  f.at = 1234;
  f.at_time_ms = 1772432077500;  // 2026-03-02T06:14:37.500Z (python datetime)
  f.onset = 1180;
  f.onset_time_ms = 1772431092000;  // 2026-03-02T05:58:12.000Z
  f.size_g = 2.5;
  f.size_sigma = 1.6666666;  // rounds to 1.667
  f.level_g = 502.5;
  f.head = 7;
  f.detector = "cusum";
  const std::string json =
      FindingToJson(f, "Line oats-1: fill weight up 2.5 g since 05:58 (head 7).");
  CHECK(
      json ==
      R"({"event":"raised","kind":"shift","line":"oats-1","at":1234,"onset":1180,"end":null,)"
      R"("severity":"warning","message":"Line oats-1: fill weight up 2.5 g since 05:58 (head 7).",)"
      R"("at_time":"2026-03-02T06:14:37.500Z","onset_time":"2026-03-02T05:58:12.000Z",)"
      R"("size_g":2.500,"size_sigma":1.667,"level_g":502.500,"head":7,"detector":"cusum"})");
  // And it is valid JSON that reads back to the same values.
  const auto parsed = nlohmann::json::parse(json);
  CHECK(parsed["at"] == 1234);
  CHECK(parsed["end"].is_null());
  CHECK(parsed["size_sigma"].get<double>() == Approx(1.667));
}

TEST_CASE("FindingToJson: a cleared finding with unknowns, exact bytes", "[json]") {
  Finding f;
  f.transition = Transition::kCleared;
  f.kind = FindingKind::kOscillation;
  f.severity = Severity::kInfo;
  f.line = "honey-2";
  f.at = 98765;
  f.at_time_ms = 1772431200094;  // 2026-03-02T06:00:00.094Z
  f.onset = 98000;
  f.end = 98700;
  f.size_g = -0.0004;  // rounds to -0.000, written as 0.000
  f.period_packs = 12.0;
  CHECK(FindingToJson(f, "") ==
        R"({"event":"cleared","kind":"oscillation","line":"honey-2","at":98765,"onset":98000,)"
        R"("end":98700,"severity":"info","message":"","at_time":"2026-03-02T06:00:00.094Z",)"
        R"("size_g":0.000,"period_packs":12.000})");

  Finding bare;
  bare.transition = Transition::kCleared;
  bare.kind = FindingKind::kCompliance;
  bare.severity = Severity::kAlarm;
  bare.line = "oats-1";
  bare.size_g = -3.14159;
  bare.level_g = std::numeric_limits<double>::quiet_NaN();  // not finite: left out
  CHECK(FindingToJson(bare, "TNE\tcheck") ==
        R"({"event":"cleared","kind":"compliance","line":"oats-1","at":0,"onset":null,)"
        R"("end":null,"severity":"alarm","message":"TNE\tcheck",)"
        R"("at_time":"1970-01-01T00:00:00.000Z","size_g":-3.142})");
}

TEST_CASE("AppendJsonString escapes quotes, backslashes and control characters", "[json]") {
  CHECK(Quoted("") == R"("")");
  CHECK(Quoted("plain 500 g") == R"("plain 500 g")");
  CHECK(Quoted(R"(say "hi" \ bye)") == R"("say \"hi\" \\ bye")");
  CHECK(Quoted("a\nb\rc\td\be\ff") == R"("a\nb\rc\td\be\ff")");
  CHECK(Quoted(std::string_view("\x00\x01\x1f\x7f", 4)) == R"("\u0000\u0001\u001f\u007f")");
  CHECK(Quoted("/ stays") == R"("/ stays")");
  // Appends rather than replaces.
  std::string out = "x=";
  AppendJsonString("y", &out);
  CHECK(out == R"(x="y")");
}

TEST_CASE("AppendJsonString keeps valid UTF-8 and escapes invalid bytes", "[json]") {
  // Valid 2-, 3- and 4-byte sequences pass through unchanged.
  CHECK(Quoted("\xc2\xb5g") == "\"\xc2\xb5g\"");                // U+00B5 micro sign
  CHECK(Quoted("\xe2\x82\xac 2") == "\"\xe2\x82\xac 2\"");      // U+20AC
  CHECK(Quoted("\xf0\x9d\x84\x9e") == "\"\xf0\x9d\x84\x9e\"");  // U+1D11E
  CHECK(Quoted("\xf4\x8f\xbf\xbf") == "\"\xf4\x8f\xbf\xbf\"");  // U+10FFFF, the last
  // Ill-formed per the Unicode Standard ch. 3 table of well-formed sequences.
  CHECK(Quoted("\xff") == R"("\u00ff")");                                // never valid
  CHECK(Quoted("a\x80z") == R"("a\u0080z")");                            // lone continuation
  CHECK(Quoted("\xe2\x82") == R"("\u00e2\u0082")");                      // truncated at the end
  CHECK(Quoted("\xe2\x82x") == R"("\u00e2\u0082x")");                    // truncated mid-text
  CHECK(Quoted("\xc0\xaf") == R"("\u00c0\u00af")");                      // overlong '/'
  CHECK(Quoted("\xe0\x80\xaf") == R"("\u00e0\u0080\u00af")");            // overlong 3-byte
  CHECK(Quoted("\xed\xa0\x80") == R"("\u00ed\u00a0\u0080")");            // surrogate U+D800
  CHECK(Quoted("\xf4\x90\x80\x80") == R"("\u00f4\u0090\u0080\u0080")");  // above U+10FFFF
  // Whatever the input, the result parses as JSON.
  const std::string messy = std::string("\xfe\"\x01\xe2\x82\xac\\", 7);
  std::string doc = "[";
  AppendJsonString(messy, &doc);
  doc += "]";
  CHECK_NOTHROW(nlohmann::json::parse(doc));
}

}  // namespace heft
