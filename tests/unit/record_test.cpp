// record_test.cpp — the native record format (native_record.h) and the
// stream framer (line_framer.h).
#include "core/record/native_record.h"

#include <catch2/catch.hpp>

#include <charconv>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <limits>
#include <optional>
#include <random>
#include <string>
#include <string_view>
#include <vector>

#include "core/record/line_framer.h"

namespace heft {
namespace {

RecordView MustParse(std::string_view text) {
  RecordView record;
  const RecordParse parse = ParseNativeRecord(text, &record);
  INFO("record: " << text << " error: " << RecordErrorName(parse.error));
  REQUIRE(parse.ok());
  REQUIRE(parse.field == -1);
  return record;
}

RecordParse ParseFails(std::string_view text) {
  RecordView record;
  record.line = "untouched";
  record.grams = 123.0;
  const RecordParse parse = ParseNativeRecord(text, &record);
  INFO("record: " << text);
  CHECK_FALSE(parse.ok());
  // A refused record leaves the caller's view as it was.
  CHECK(record.line == "untouched");
  CHECK(record.grams == 123.0);
  return parse;
}

std::string Format(std::int64_t time_ms) {
  char buffer[32];
  FormatTimeMs(time_ms, buffer);
  return buffer;
}

// ---------------------------------------------------------------------------
// Good records

TEST_CASE("native record: ISO time, head, grams, no status", "[record]") {
  const RecordView r = MustParse("2026-03-02T06:00:00.094Z,oats-1,3,503.2");
  CHECK(r.has_time);
  // Reference: python3 datetime, (datetime(2026,3,2,6,0,0,94000,tzinfo=timezone.utc)
  //            - datetime(1970,1,1,tzinfo=timezone.utc)) // timedelta(milliseconds=1)
  CHECK(r.time_ms == 1772431200094);
  CHECK(r.line == "oats-1");
  CHECK(r.head == 3);
  CHECK(r.grams == 503.2);
  CHECK(r.status == PackStatus::kOk);
}

TEST_CASE("native record: epoch ms time, empty head, status", "[record]") {
  const RecordView r = MustParse("1772431200094,oats-1,,503.2,reject");
  CHECK(r.has_time);
  CHECK(r.time_ms == 1772431200094);
  CHECK(r.head == kNoHead);
  CHECK(r.status == PackStatus::kRejected);

  CHECK(MustParse("1772431200094,oats-1,0,503.2,ok").status == PackStatus::kOk);
  CHECK(MustParse("1772431200094,oats-1,0,503.2,error").status == PackStatus::kError);
  CHECK(MustParse("1772431200094,oats-1,0,503.2,").status == PackStatus::kOk);
  CHECK(MustParse("0,oats-1,0,503.2").time_ms == 0);
}

TEST_CASE("native record: empty time means no device time", "[record]") {
  const RecordView r = MustParse(",honey-2,0,341.5");
  CHECK_FALSE(r.has_time);
  CHECK(r.head == 0);
  CHECK(r.line == "honey-2");
  CHECK(MustParse(" \t ,honey-2,,341.5").has_time == false);
}

TEST_CASE("native record: +00:00 zone and fraction lengths", "[record]") {
  // Reference for 1772431200000: python3 datetime as above, without the 94 ms.
  CHECK(MustParse("2026-03-02T06:00:00+00:00,oats-1,1,500").time_ms == 1772431200000);
  CHECK(MustParse("2026-03-02T06:00:00Z,oats-1,1,500").time_ms == 1772431200000);
  CHECK(MustParse("2026-03-02T06:00:00.5Z,oats-1,1,500").time_ms == 1772431200500);
  CHECK(MustParse("2026-03-02T06:00:00.09Z,oats-1,1,500").time_ms == 1772431200090);
  // Fractions below a millisecond are truncated, not rounded.
  CHECK(MustParse("2026-03-02T06:00:00.0949Z,oats-1,1,500").time_ms == 1772431200094);
  CHECK(MustParse("2026-03-02T06:00:00.999999999Z,oats-1,1,500").time_ms == 1772431200999);
  CHECK(MustParse("2026-03-02T06:00:00.094+00:00,oats-1,1,500").time_ms == 1772431200094);
}

TEST_CASE("native record: weight units convert to exact grams", "[record]") {
  // 1 kg = 1000 g; 1 lb = 0.45359237 kg exactly (international avoirdupois
  // pound, 1959); 1 oz = 1/16 lb = 28.349523125 g (NIST Handbook 44 App. C / SP 811).
  CHECK(MustParse(",l,,500g").grams == 500.0);
  CHECK(MustParse(",l,,0.5kg").grams == 500.0);
  CHECK(MustParse(",l,,2.5 kg").grams == 2500.0);
  CHECK(MustParse(",l,,1lb").grams == 453.59237);
  CHECK(MustParse(",l,,1oz").grams == 28.349523125);
  // Powers of two scale doubles exactly, so these equal the decimal constants.
  CHECK(MustParse(",l,,16oz").grams == 453.59237);
  CHECK(MustParse(",l,,0.25lb").grams == 113.3980925);
  CHECK(MustParse(",l,,8oz").grams == 226.796185);
  // Others within a few ulps of the decimal value (17.6 × 28.349523125 = 498.95160700).
  CHECK(MustParse(",l,,17.6oz").grams == Approx(498.951607).epsilon(1e-14));
  CHECK(MustParse(",l,,1.1lb").grams == Approx(498.951607).epsilon(1e-14));
  CHECK(MustParse(",l,,0.5002kg").grams == Approx(500.2).epsilon(1e-14));
  CHECK(ParseWeightGrams("1.1lb").value() == Approx(498.951607).epsilon(1e-14));
}

TEST_CASE("native record: weights, numeric spacing, negatives", "[record]") {
  CHECK(MustParse(",l,,  503.25 ").grams == 503.25);
  CHECK(MustParse(",l,,\t503.25\t").grams == 503.25);
  CHECK(MustParse(",l,,-3.5").grams == -3.5);  // gross packs: the core decides
  CHECK(MustParse(",l,,.5").grams == 0.5);
  CHECK(MustParse(",l,,5e2").grams == 500.0);
  CHECK(MustParse(" 1772431200094 ,l, 7 ,1").time_ms == 1772431200094);
  CHECK(MustParse(" 1772431200094 ,l, 7 ,1").head == 7);
  CHECK(MustParse(",l,999,1").head == 999);
  CHECK(MustParse(",l,007,1").head == 7);
}

TEST_CASE("native record: line id charset and length", "[record]") {
  CHECK(MustParse(",Oats_1.a-B,,1").line == "Oats_1.a-B");
  const std::string longest(64, 'x');
  CHECK(MustParse("," + longest + ",,1").line == longest);
  const RecordParse p = ParseFails("," + std::string(65, 'x') + ",,1");
  CHECK(p.error == RecordError::kBadLine);
  CHECK(p.field == 1);
}

// ---------------------------------------------------------------------------
// Bad records: each kind with the field it names

TEST_CASE("native record: wrong column count", "[record]") {
  for (std::string_view text : {"2026-03-02T06:00:00Z,oats-1,3", "a", "1,oats-1,3,500,ok,extra",
                                ",,,,,,,,", "1,oats-1;3;500"}) {
    const RecordParse p = ParseFails(text);
    CHECK(p.error == RecordError::kColumnCount);
    CHECK(p.field == -1);
  }
}

TEST_CASE("native record: bad weights and units", "[record]") {
  for (std::string_view weight : {"abc", "", "  ", "500.2.3", "+500", "nan", "NaN", "inf", "-inf",
                                  "infinity", "1e999", "-", "g", "0x10", "5 g g", "5-"}) {
    const RecordParse p = ParseFails(",oats-1,1," + std::string(weight));
    INFO("weight: '" << weight << "'");
    CHECK(p.error == RecordError::kBadWeight);
    CHECK(p.field == 3);
  }
  for (std::string_view weight : {"500mg", "500 G", "500KG", "1 stone", "500gr"}) {
    const RecordParse p = ParseFails(",oats-1,1," + std::string(weight));
    INFO("weight: '" << weight << "'");
    CHECK(p.error == RecordError::kBadUnit);
    CHECK(p.field == 3);
  }
  CHECK_FALSE(ParseWeightGrams("nan").has_value());
  CHECK_FALSE(ParseWeightGrams("1e308lb").has_value());  // finite number, infinite grams
}

TEST_CASE("native record: bad times", "[record]") {
  for (std::string_view time : {
           "2026-13-02T06:00:00Z",             // month 13
           "2026-00-02T06:00:00Z",             // month 0
           "2026-02-30T06:00:00Z",             // Feb 30
           "2025-02-29T06:00:00Z",             // not a leap year
           "2100-02-29T06:00:00Z",             // century, not a leap year
           "2026-04-31T06:00:00Z",             // April has 30 days
           "2026-03-00T06:00:00Z",             // day 0
           "2026-03-02T24:00:00Z",             // hour 24
           "2026-03-02T06:60:00Z",             // minute 60
           "2026-03-02T06:00:60Z",             // leap second: refused
           "2026-03-02T06:00:00",              // no zone
           "2026-03-02T06:00:00+01:00",        // not UTC
           "2026-03-02T06:00:00z",             // lower-case zone
           "2026-03-02 06:00:00Z",             // space for T
           "2026-03-02T06:00:00.Z",            // point without digits
           "2026-03-02T06:00:00.1234567890Z",  // ten fraction digits
           "2026-3-2T06:00:00Z",               // short fields
           "yesterday",                        // garbage
           "-5",                               // negative epoch ms
           "1772431200094.5",                  // fractional epoch ms
           "253402300800000",                  // epoch ms past 9999-12-31
           "99999999999999999999999",          // overflows int64
       }) {
    const RecordParse p = ParseFails(std::string(time) + ",oats-1,1,500");
    INFO("time: '" << time << "'");
    CHECK(p.error == RecordError::kBadTime);
    CHECK(p.field == 0);
    CHECK_FALSE(ParseTimeMs(time).has_value());
  }
  // Feb 29 of a leap year is fine (python3 datetime(2024,2,29,tzinfo=utc) → 1709164800000 ms).
  CHECK(MustParse("2024-02-29T00:00:00Z,oats-1,1,500").time_ms == 1709164800000);
}

TEST_CASE("native record: empty and blank records", "[record]") {
  for (std::string_view text : {"", " ", "\t \t"}) {
    const RecordParse p = ParseFails(text);
    CHECK(p.error == RecordError::kEmpty);
    CHECK(p.field == -1);
  }
}

TEST_CASE("native record: bad line ids", "[record]") {
  // Line ids are not trimmed: only numeric fields tolerate surrounding blanks.
  for (std::string_view line : {"", "oats 1", "oats/1", "oats:1", " oats-1", "oats-1 ", "\toats"}) {
    INFO("line: '" << line << "'");
    std::string text = ",";  // piecewise: GCC 12 warns falsely on "," + std::string
    text += line;
    text += ",1,500";
    const RecordParse p = ParseFails(text);
    CHECK(p.error == RecordError::kBadLine);
    CHECK(p.field == 1);
  }
  CHECK(IsNativeLineId("oats-1"));
  CHECK_FALSE(IsNativeLineId(""));
  CHECK_FALSE(IsNativeLineId(std::string(65, 'a')));
}

TEST_CASE("native record: bad heads", "[record]") {
  for (std::string_view head : {"-1", "1000", "3.0", "x", "1 2", "+3", "99999999999"}) {
    const RecordParse p = ParseFails(",oats-1," + std::string(head) + ",500");
    INFO("head: '" << head << "'");
    CHECK(p.error == RecordError::kBadHead);
    CHECK(p.field == 2);
  }
}

TEST_CASE("native record: bad statuses", "[record]") {
  for (std::string_view status : {"OK", "rejected", " ok", "ok ", "Error", "1"}) {
    const RecordParse p = ParseFails(",oats-1,1,500," + std::string(status));
    INFO("status: '" << status << "'");
    CHECK(p.error == RecordError::kBadStatus);
    CHECK(p.field == 4);
  }
}

TEST_CASE("native record: control and non-ASCII bytes are binary", "[record]") {
  const std::string good = "2026-03-02T06:00:00Z,oats-1,1,500";
  MustParse(good);
  // Each bad byte placed in each field in turn; none may pass.
  for (char bad : {'\x00', '\x01', '\x1f', '\r', '\n', '\x7f', '\x80', '\xc3', '\xff'}) {
    for (std::size_t pos : {std::size_t{0}, std::size_t{5}, std::size_t{22}, good.size()}) {
      std::string text = good;
      text.insert(pos, 1, bad);
      const RecordParse p = ParseFails(text);
      INFO("byte " << static_cast<int>(static_cast<unsigned char>(bad)) << " at " << pos);
      CHECK(p.error == RecordError::kBinary);
      CHECK(p.field == -1);
    }
  }
  // UTF-8 text ("é" in the line id) is refused as binary too.
  CHECK(ParseFails(",caf\xc3\xa9,1,500").error == RecordError::kBinary);
  // A tab is text: around a numeric field it is trimmed.
  CHECK(MustParse("\t2026-03-02T06:00:00Z\t,oats-1,1,500").time_ms == 1772431200000);
}

TEST_CASE("native record: error names are distinct and stable", "[record]") {
  CHECK(RecordErrorName(RecordError::kNone) == "none");
  CHECK(RecordErrorName(RecordError::kColumnCount) == "column_count");
  CHECK(RecordErrorName(RecordError::kBadWeight) == "bad_weight");
  CHECK(RecordErrorName(RecordError::kTooLong) == "too_long");
  std::vector<std::string_view> names;
  for (int e = 0; e <= static_cast<int>(RecordError::kTooLong); ++e) {
    names.push_back(RecordErrorName(static_cast<RecordError>(e)));
  }
  for (std::size_t i = 0; i < names.size(); ++i) {
    for (std::size_t j = i + 1; j < names.size(); ++j) CHECK(names[i] != names[j]);
  }
}

// ---------------------------------------------------------------------------
// Header

TEST_CASE("native header detection", "[record]") {
  CHECK(IsNativeHeader("time,line,head,weight"));
  CHECK(IsNativeHeader("time,line,head,weight,status"));
  CHECK(IsNativeHeader("time,line,head,weight  "));
  CHECK(IsNativeHeader("time,line,head,weight,status\r"));
  CHECK(IsNativeHeader("time,line,head,weight \t\r"));
  CHECK_FALSE(IsNativeHeader("time,line,head"));
  CHECK_FALSE(IsNativeHeader("Time,line,head,weight"));
  CHECK_FALSE(IsNativeHeader(" time,line,head,weight"));
  CHECK_FALSE(IsNativeHeader("time, line,head,weight"));
  CHECK_FALSE(IsNativeHeader("time,line,head,weight,status,extra"));
  CHECK_FALSE(IsNativeHeader("time,line,head,weight,"));
  CHECK_FALSE(IsNativeHeader("2026-03-02T06:00:00Z,oats-1,1,500"));
  CHECK_FALSE(IsNativeHeader(""));
  // The header is not a record: "time" is not a time.
  CHECK(ParseFails("time,line,head,weight").error == RecordError::kBadTime);
}

// ---------------------------------------------------------------------------
// Time formatting and parsing

TEST_CASE("FormatTimeMs and ParseTimeMs against python datetime", "[record]") {
  // Reference: python3 datetime —
  //   (datetime(Y,M,D,h,m,s,us,tzinfo=timezone.utc) - datetime(1970,1,1,tzinfo=timezone.utc))
  //       // timedelta(milliseconds=1)
  struct Case {
    const char* text;
    std::int64_t ms;
  };
  const Case cases[] = {
      {"2026-03-02T06:00:00.094Z", 1772431200094},
      {"1970-01-01T00:00:00.000Z", 0},
      {"2000-02-29T12:34:56.789Z", 951827696789},
      {"2024-12-31T23:59:59.999Z", 1735689599999},
      {"2100-03-01T00:00:00.000Z", 4107542400000},
      {"9999-12-31T23:59:59.999Z", 253402300799999},
      {"1969-12-31T23:59:59.999Z", -1},
      {"1900-02-28T01:02:03.004Z", -2203973876996},
      {"0001-01-01T00:00:00.000Z", -62135596800000},
  };
  for (const Case& c : cases) {
    INFO(c.text);
    CHECK(Format(c.ms) == c.text);
    CHECK(ParseTimeMs(c.text) == c.ms);
  }
  CHECK(ParseTimeMs("2026-03-02T06:00:00.094+00:00") == 1772431200094);
  CHECK(ParseTimeMs("1772431200094") == 1772431200094);
  CHECK(ParseTimeMs("253402300799999") == 253402300799999);
}

TEST_CASE("FormatTimeMs then ParseTimeMs is the identity over years 0000-9999", "[record]") {
  const std::int64_t first = -62167219200000;  // 0000-01-01T00:00:00.000Z (proleptic Gregorian)
  CHECK(Format(first) == "0000-01-01T00:00:00.000Z");
  const std::int64_t last = 253402300799999;
  // A step that is not a multiple of any calendar unit visits every month,
  // day, hour and millisecond pattern many times (about 2.1 million points).
  const std::int64_t step = 150'000'017'003;
  std::int64_t checked = 0;
  std::int64_t failures = 0;
  for (std::int64_t t = first; t <= last; t += step / 1000) {
    const std::optional<std::int64_t> back = ParseTimeMs(Format(t));
    if (!back || *back != t) {
      if (++failures < 5) FAIL_CHECK("round trip failed at " << t << " " << Format(t));
    }
    ++checked;
  }
  CHECK(failures == 0);
  CHECK(checked > 2'000'000);
}

TEST_CASE("FormatTimeMs extremes stay inside the buffer", "[record]") {
  const std::string max = Format(std::numeric_limits<std::int64_t>::max());
  const std::string min = Format(std::numeric_limits<std::int64_t>::min());
  CHECK(max.size() < 32);
  CHECK(min.size() < 32);
  CHECK(max.front() == '+');
  CHECK(min.front() == '-');
  CHECK(max.back() == 'Z');
  // Year 10000 is written in the expanded form and is not accepted back.
  CHECK(Format(253402300800000) == "+10000-01-01T00:00:00.000Z");
  CHECK_FALSE(ParseTimeMs(Format(253402300800000)).has_value());
}

// ---------------------------------------------------------------------------
// LineFramer

struct Collected {
  std::vector<std::string> records;
  std::vector<std::size_t> too_long;
};

// Feeds `chunks` to a framer, then Finish().
Collected Frame(const std::vector<std::string>& chunks,
                std::size_t max_record = LineFramer::kDefaultMaxRecord, bool finish = true) {
  Collected out;
  LineFramer framer(max_record);
  auto on_record = [&](std::string_view r) { out.records.emplace_back(r); };
  auto on_too_long = [&](std::size_t n) { out.too_long.push_back(n); };
  for (const std::string& chunk : chunks) framer.Feed(chunk, on_record, on_too_long);
  if (finish) framer.Finish(on_record, on_too_long);
  return out;
}

std::vector<std::string> OneByteChunks(const std::string& text) {
  std::vector<std::string> chunks;
  for (char c : text) chunks.emplace_back(1, c);
  return chunks;
}

std::vector<std::string> RandomChunks(const std::string& text, std::uint32_t seed,
                                      std::size_t max_chunk) {
  std::mt19937 rng(seed);
  std::uniform_int_distribution<std::size_t> size(0, max_chunk);  // 0: empty chunks too
  std::vector<std::string> chunks;
  for (std::size_t pos = 0; pos < text.size();) {
    const std::size_t n = std::min(size(rng), text.size() - pos);
    chunks.push_back(text.substr(pos, n));
    pos += n;
  }
  return chunks;
}

TEST_CASE("framer: LF, CR and CRLF terminators", "[record]") {
  using V = std::vector<std::string>;
  CHECK(Frame({"a,1\nb,2\n"}).records == V{"a,1", "b,2"});
  CHECK(Frame({"a,1\rb,2\r"}).records == V{"a,1", "b,2"});
  CHECK(Frame({"a,1\r\nb,2\r\n"}).records == V{"a,1", "b,2"});
  CHECK(Frame({"a\nb\rc\r\nd"}).records == V{"a", "b", "c", "d"});
  // Blank lines are not records.
  CHECK(Frame({"\n\n\r\n\ra\n\n\r\r\nb\n"}).records == V{"a", "b"});
  CHECK(Frame({"a\n"}).too_long.empty());
}

TEST_CASE("framer: CRLF split across chunks", "[record]") {
  using V = std::vector<std::string>;
  const Collected c = Frame({"a,1\r", "\nb,2\r", "\n"});
  CHECK(c.records == V{"a,1", "b,2"});
  CHECK(Frame({"a,1\r", "", "\nb,2"}).records == V{"a,1", "b,2"});
  CHECK(Frame({"a,1\r", "\r\n", "b,2"}).records == V{"a,1", "b,2"});
  CHECK(Frame({"a,1", "\r", "\n", "b", ",2", "\r\n"}).records == V{"a,1", "b,2"});
  CHECK(Frame({"a,1\r", "\n"}, LineFramer::kDefaultMaxRecord, false).records == V{"a,1"});
}

const std::string kFeed =
    "time,line,head,weight,status\r\n"
    "2026-03-02T06:00:00.094Z,oats-1,1,503.2,ok\r\n"
    "2026-03-02T06:00:00.594Z,oats-1,2,502.9\n"
    "\n"
    "1772431201094,oats-2,,1004.5,reject\r"
    ",honey-2,3,343.1\r\n"
    "\r\n"
    "2026-03-02T06:00:01.594Z,oats-1,3,0.5031kg\n"
    "2026-03-02T06:00:02.094Z,oats-1,4,17.7oz";  // no terminator: Finish delivers it

TEST_CASE("framer: one byte at a time and random splits give the same records", "[record]") {
  const Collected whole = Frame({kFeed});
  REQUIRE(whole.records.size() == 7);
  CHECK(whole.records.front() == "time,line,head,weight,status");
  CHECK(whole.records.back() == "2026-03-02T06:00:02.094Z,oats-1,4,17.7oz");
  CHECK(whole.too_long.empty());

  CHECK(Frame(OneByteChunks(kFeed)).records == whole.records);
  for (std::uint32_t seed : {1u, 2u, 3u, 42u, 2026u, 31337u}) {
    for (std::size_t max_chunk : {2u, 7u, 64u}) {
      INFO("seed " << seed << " max chunk " << max_chunk);
      const Collected split = Frame(RandomChunks(kFeed, seed, max_chunk));
      CHECK(split.records == whole.records);
      CHECK(split.too_long.empty());
    }
  }
  // And every record after the header parses.
  for (std::size_t i = 1; i < whole.records.size(); ++i) MustParse(whole.records[i]);
}

TEST_CASE("framer: a 1 MiB record is dropped with one report, the next is intact", "[record]") {
  const std::size_t huge = 1 << 20;
  const std::string text = "before,1\n" + std::string(huge, 'x') + "\r\nafter,2\n";
  using V = std::vector<std::string>;
  const auto check = [&](const Collected& c) {
    CHECK(c.records == V{"before,1", "after,2"});
    REQUIRE(c.too_long.size() == 1);
    CHECK(c.too_long[0] == huge);
  };
  check(Frame({text}));
  {
    std::vector<std::string> chunks;  // 4 KiB reads, as a socket would give
    for (std::size_t pos = 0; pos < text.size(); pos += 4096)
      chunks.push_back(text.substr(pos, 4096));
    check(Frame(chunks));
  }
  check(Frame(RandomChunks(text, 7, 100'000)));
  check(Frame(RandomChunks(text, 8, 5'000)));
}

TEST_CASE("framer: the maximum length is inclusive", "[record]") {
  using V = std::vector<std::string>;
  const std::string text = "12345678\n123456789\nabc\n";
  const Collected whole = Frame({text}, 8);
  CHECK(whole.records == V{"12345678", "abc"});
  CHECK(whole.too_long == std::vector<std::size_t>{9});
  CHECK(Frame(OneByteChunks(text), 8).records == whole.records);
  CHECK(Frame(OneByteChunks(text), 8).too_long == whole.too_long);
  for (std::uint32_t seed : {5u, 6u, 7u}) {
    const Collected split = Frame(RandomChunks(text, seed, 5), 8);
    CHECK(split.records == whole.records);
    CHECK(split.too_long == whole.too_long);
  }
}

TEST_CASE("framer: Finish delivers a pending record once", "[record]") {
  using V = std::vector<std::string>;
  Collected out;
  LineFramer framer;
  auto on_record = [&](std::string_view r) { out.records.emplace_back(r); };
  auto on_too_long = [&](std::size_t n) { out.too_long.push_back(n); };
  framer.Feed("a,1\nb,", on_record, on_too_long);
  CHECK(out.records == V{"a,1"});
  CHECK(framer.pending_bytes() == 2);
  framer.Feed("2", on_record, on_too_long);
  framer.Finish(on_record, on_too_long);
  CHECK(out.records == V{"a,1", "b,2"});
  CHECK(framer.pending_bytes() == 0);
  framer.Finish(on_record, on_too_long);  // nothing left: nothing more
  CHECK(out.records.size() == 2);
  // A pending over-long record is reported, not delivered.
  Collected c = Frame({"ok\n", std::string(20, 'y')}, 10);
  CHECK(c.records == V{"ok"});
  CHECK(c.too_long == std::vector<std::size_t>{20});
  // The framer is usable again after Finish.
  framer.Feed("c,3\n", on_record, on_too_long);
  CHECK(out.records.back() == "c,3");
}

}  // namespace
}  // namespace heft

// The plain-decimal fast path must give the very double std::from_chars gives
// (the C++ standard's correctly rounded conversion), for every length it takes.
TEST_CASE("native record: fast decimal path equals from_chars", "[record]") {
  std::mt19937_64 rng(20261202);
  std::uniform_int_distribution<int> length(1, 17), frac(0, 16), digit(0, 9), sign(0, 3);
  for (int trial = 0; trial < 200000; ++trial) {
    std::string text = sign(rng) == 0 ? "-" : "";
    const int int_digits = length(rng);
    for (int i = 0; i < int_digits; ++i) text += static_cast<char>('0' + digit(rng));
    const int fraction = frac(rng);
    if (fraction > 0) {
      text += '.';
      for (int i = 0; i < fraction; ++i) text += static_cast<char>('0' + digit(rng));
    }
    double expected = 0.0;
    const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), expected);
    REQUIRE(ec == std::errc());
    REQUIRE(end == text.data() + text.size());
    const std::optional<double> got = heft::ParseWeightGrams(text);
    INFO(text);
    REQUIRE(got.has_value());
    CHECK(std::memcmp(&*got, &expected, sizeof expected) == 0);  // bit for bit, -0 too
  }
}

// The word-at-a-time scan against the plain rule, byte by byte, on random short
// records over an alphabet of the bytes that matter (commas, blanks, tab, control,
// DEL, non-ASCII): binary wins over everything, then blank, then the column count.
TEST_CASE("native record: word scan agrees with the byte-by-byte rule", "[record]") {
  const std::string alphabet = std::string("a1.,, \t-") + '\x01' + '\x7f' + '\x80' + '\xff';
  std::mt19937_64 rng(5);
  std::uniform_int_distribution<std::size_t> pick(0, alphabet.size() - 1), length(0, 40);
  for (int trial = 0; trial < 100000; ++trial) {
    std::string text(length(rng), ' ');
    for (char& c : text) c = alphabet[pick(rng)];
    bool binary = false, blank = true;
    int commas = 0;
    for (unsigned char c : text) {
      binary = binary || (c < 0x20 && c != '\t') || c >= 0x7F;
      blank = blank && (c == ' ' || c == '\t');
      commas += c == ',';
    }
    heft::RecordView record;
    const heft::RecordParse parse = heft::ParseNativeRecord(text, &record);
    INFO(text);
    if (binary) {
      CHECK(parse.error == heft::RecordError::kBinary);
    } else if (blank) {
      CHECK(parse.error == heft::RecordError::kEmpty);
    } else if (commas != 3 && commas != 4) {
      CHECK(parse.error == heft::RecordError::kColumnCount);
    } else {
      CHECK(parse.error != heft::RecordError::kBinary);
      CHECK(parse.error != heft::RecordError::kColumnCount);
    }
  }
}

// The one-pass path for the common record shape against the general parser, on
// well-formed records and on copies with one to three bytes replaced from an
// alphabet of the characters that matter to either path.
TEST_CASE("native record: the common-shape fast path agrees with the general parser", "[record]") {
  // With the neighbours of every line-id character range ("/@[`{" and 0x7F, 0xFF),
  // which the SSE2 classifier must tell from the characters themselves.
  const std::string alphabet =
      std::string("0123456789,.-:TZ+ \tagk/@[`{AZz_") + '\x01' + '\x80' + '\x7f' + '\xff';
  std::mt19937_64 rng(77);
  std::uniform_int_distribution<int> digit(0, 9), small(0, 3), line_len(1, 70), head(0, 1200);
  std::uniform_int_distribution<std::size_t> pick(0, alphabet.size() - 1);
  int fast_shaped = 0;
  for (int trial = 0; trial < 200000; ++trial) {
    char time[40];
    std::snprintf(time, sizeof time, "20%d%d-0%d-1%dT%d%d:%d%d:%d%d%s", digit(rng), digit(rng),
                  1 + digit(rng) % 9, digit(rng) % 3, digit(rng) % 3, digit(rng), digit(rng) % 6,
                  digit(rng), digit(rng) % 7, digit(rng),
                  small(rng) == 0 ? "Z" : (small(rng) == 0 ? ".5Z" : ".123Z"));
    std::string text = time;
    text += ',';
    const int n_line = small(rng) == 0 ? line_len(rng) : 1 + small(rng) * 3;
    for (int i = 0; i < n_line; ++i) text += "ab-_.9AZz0"[digit(rng)];
    text += ',' + std::to_string(head(rng)) + ',';
    if (small(rng) == 0) text += '-';
    text += std::to_string(digit(rng) * 97 + digit(rng)) + "." + std::to_string(digit(rng));
    for (int edits = small(rng); edits > 0; --edits) {
      text[std::uniform_int_distribution<std::size_t>(0, text.size() - 1)(rng)] =
          alphabet[pick(rng)];
    }
    heft::RecordView fast, general;
    const heft::RecordParse a = heft::ParseNativeRecord(text, &fast);
    const heft::RecordParse b = heft::ParseNativeRecordGeneral(text, &general);
    INFO(text);
    REQUIRE(a.ok() == b.ok());
    REQUIRE(a.error == b.error);
    REQUIRE(a.field == b.field);
    if (!a.ok()) continue;
    ++fast_shaped;
    REQUIRE(fast.line == general.line);
    REQUIRE(fast.head == general.head);
    REQUIRE(fast.has_time == general.has_time);
    REQUIRE(fast.time_ms == general.time_ms);
    REQUIRE(fast.status == general.status);
    REQUIRE(std::memcmp(&fast.grams, &general.grams, sizeof fast.grams) == 0);
  }
  CHECK(fast_shaped > 40000);  // the well-formed share really was parsed
}

// The framer's block terminator search (SSE2 or word-at-a-time) against a plain byte loop, from
// every start position of random buffers dense in LF, CR and bytes one off from them.
TEST_CASE("line framer: terminator search agrees with a byte loop", "[record]") {
  const std::string alphabet = std::string("ab,\n\r") + '\x0b' + '\x0c' + '\x09' + '\x8a' + '\x8d';
  std::mt19937_64 rng(11);
  std::uniform_int_distribution<std::size_t> pick(0, alphabet.size() - 1), length(0, 70);
  std::uniform_int_distribution<int> sparse(0, 9);
  for (int trial = 0; trial < 20000; ++trial) {
    std::string bytes(length(rng), 'x');
    for (char& c : bytes) c = sparse(rng) == 0 ? alphabet[pick(rng)] : 'q';
    for (std::size_t pos = 0; pos <= bytes.size(); ++pos) {
      std::size_t expected = pos;
      while (expected < bytes.size() && bytes[expected] != '\n' && bytes[expected] != '\r') {
        ++expected;
      }
      REQUIRE(heft::LineFramer::FindTerminator(bytes, pos) == expected);
    }
  }
}
