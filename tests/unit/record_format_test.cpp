// record_format_test.cpp — configured record formats (core/record/*_format.h,
// io/json_lines_format.h): good and bad records, decimal comma, units, scale
// and offset, time formats, status mapping; and StreamIngest with a format.
#include "core/record/record_format.h"

#include <catch2/catch.hpp>

#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "core/monitor/plant.h"
#include "core/monitor/stream_ingest.h"
#include "core/record/pattern_format.h"
#include "core/record/record_fields.h"
#include "io/record_format_factory.h"

namespace heft {
namespace {

// Unit factors are exact by definition: 1 lb = 0.45359237 kg (international
// avoirdupois pound, 1959; NIST Handbook 44 Appendix C), 1 oz = 1/16 lb.
constexpr double kOunce = 28.349523125;
constexpr double kPound = 453.59237;

std::unique_ptr<RecordFormat> Make(const FormatSettings& settings) {
  std::unique_ptr<RecordFormat> format;
  const Status status = MakeRecordFormat(settings, &format);
  INFO(status.message());
  REQUIRE(status.ok());
  return format;
}

std::string MakeError(const FormatSettings& settings) {
  std::unique_ptr<RecordFormat> format;
  const Status status = MakeRecordFormat(settings, &format);
  CHECK_FALSE(status.ok());
  return status.message();
}

RecordView MustParse(RecordFormat& format, std::string_view text) {
  RecordView record;
  const RecordParse parse = format.Parse(text, &record);
  INFO("record: " << text << " error: " << RecordErrorName(parse.error) << " field "
                  << parse.field_name);
  REQUIRE(parse.ok());
  return record;
}

RecordParse Fails(RecordFormat& format, std::string_view text) {
  RecordView record;
  const RecordParse parse = format.Parse(text, &record);
  INFO("record: " << text);
  CHECK_FALSE(parse.ok());
  return parse;
}

FormatSettings Delimited(char delimiter) {
  FormatSettings s;
  s.kind = FormatKind::kDelimited;
  s.delimiter = delimiter;
  return s;
}

TEST_CASE("delimited: semicolons, decimal comma, column map", "[format]") {
  FormatSettings s = Delimited(';');
  s.decimal_comma = true;
  s.field(RecordField::kTime).column = 0;
  s.field(RecordField::kLine).column = 1;
  s.field(RecordField::kHead).column = 2;
  s.field(RecordField::kWeight).column = 3;
  s.field(RecordField::kUnit).column = 4;
  s.field(RecordField::kStatus).column = 5;
  s.status.ok = {"OK", "GOOD"};
  s.status.rejected = {"UNDER", "OVER"};
  s.status.error = {"ERR", "MOTION"};
  auto f = Make(s);
  CHECK_FALSE(f->TakeHeader("2026-03-02T06:00:00Z;oats-1;3;503,4;g;OK"));

  RecordView r = MustParse(*f, "2026-03-02T06:00:00.094Z;oats-1;3;503,4;g;OK");
  CHECK(r.line == "oats-1");
  CHECK(r.head == 3);
  CHECK(r.grams == 503.4);
  CHECK(r.has_time);
  CHECK(r.time_ms == 1772431200094);  // 2026-03-02T06:00:00Z = 1772431200 s (date -u -d)
  CHECK(r.status == PackStatus::kOk);

  r = MustParse(*f, " ;honey-2; ; 0,3431 ;kg;under");
  CHECK_FALSE(r.has_time);
  CHECK(r.head == kNoHead);
  CHECK(r.grams == Approx(343.1).epsilon(1e-12));
  CHECK(r.status == PackStatus::kRejected);
  CHECK(MustParse(*f, ";oats-1;1;17,6;oz;motion").status == PackStatus::kError);
  CHECK(MustParse(*f, ";oats-1;1;17,6;oz;OK").grams == Approx(17.6 * kOunce).epsilon(1e-12));
  CHECK(MustParse(*f, ";oats-1;1;1,1;LB;OK").grams == Approx(1.1 * kPound).epsilon(1e-12));

  // Bad records name the field and its column.
  RecordParse p = Fails(*f, ";oats-1;3;503.4;g;OK");  // a point with decimal_comma
  CHECK(p.error == RecordError::kBadWeight);
  CHECK(p.field == 3);
  CHECK(p.field_name == "weight");
  p = Fails(*f, ";oats-1;3;503,4;stone;OK");
  CHECK(p.error == RecordError::kBadUnit);
  CHECK(p.field_name == "unit");
  p = Fails(*f, ";oats-1;3;503,4;g;MAYBE");
  CHECK(p.error == RecordError::kBadStatus);
  CHECK(p.field == 5);
  p = Fails(*f, ";oats-1;3;503,4");
  CHECK(p.error == RecordError::kColumnCount);
  CHECK(p.field_name == "unit");
  CHECK(Fails(*f, ";bad line!;3;503,4;g;OK").error == RecordError::kBadLine);
  CHECK(Fails(*f, ";oats-1;1000;503,4;g;OK").error == RecordError::kBadHead);
  CHECK(Fails(*f, "yesterday;oats-1;3;503,4;g;OK").error == RecordError::kBadTime);
  CHECK(Fails(*f,
              ";oats-1;3;5\x01"
              "03;g;OK")
            .error == RecordError::kBinary);
  CHECK(Fails(*f, "   ").error == RecordError::kEmpty);
}

TEST_CASE("delimited: header names, quoted cells, skip mode", "[format]") {
  FormatSettings s = Delimited(',');
  s.header = HeaderMode::kNames;
  s.field(RecordField::kLine).name = "Line";
  s.field(RecordField::kWeight).name = "Net (g)";
  s.field(RecordField::kHead).column = 2;
  auto f = Make(s);
  REQUIRE(f->TakeHeader("Line,Product,Head,\"Net (g)\""));
  RecordView r = MustParse(*f, "oats-1,\"Oats, rolled\",7,501.9");
  CHECK(r.line == "oats-1");
  CHECK(r.head == 7);
  CHECK(r.grams == 501.9);

  // A stream whose header lacks a named column: every record says which.
  auto g = f->Clone();
  REQUIRE(g->TakeHeader("Line,Product,Head,Gross"));
  RecordParse p = Fails(*g, "oats-1,x,7,501.9");
  CHECK(p.error == RecordError::kMissingField);
  CHECK(p.field_name == "weight");

  FormatSettings k = Delimited('\t');
  k.header = HeaderMode::kSkip;
  k.line_id = "honey-2";
  k.field(RecordField::kWeight).column = 1;
  auto skip = Make(k);
  CHECK(skip->TakeHeader("anything at all"));
  r = MustParse(*skip, "x\t341.2");
  CHECK(r.line == "honey-2");  // fixed line id from the source
  CHECK(r.grams == 341.2);
}

TEST_CASE("delimited: settings that cannot work are refused", "[format]") {
  FormatSettings s = Delimited(',');
  s.field(RecordField::kLine).column = 0;
  CHECK(MakeError(s) == "format.fields.weight: required");
  s.field(RecordField::kWeight).column = 1;
  s.decimal_comma = true;
  CHECK(MakeError(s) == "format.decimal_comma: needs a delimiter other than ','");
  s.decimal_comma = false;
  s.field(RecordField::kHead).name = "Head";
  CHECK(MakeError(s) == "format.fields: column names need header: names");
  s.field(RecordField::kHead).name.clear();
  s.line_id = "oats-1";
  CHECK(MakeError(s) == "format.fields.line: the source fixes line_id; set one or the other");
  s.line_id.clear();
  s.field(RecordField::kLine).column = -1;
  CHECK(MakeError(s) == "format.fields.line: required unless the source sets line_id");
}

TEST_CASE("key=value: default keys, custom keys and separators", "[format]") {
  FormatSettings s;
  s.kind = FormatKind::kKeyValue;
  auto f = Make(s);
  RecordView r = MustParse(*f, "ST,GS line=oats-1 head=4  weight=\"502.8 g\" status=reject");
  CHECK(r.line == "oats-1");
  CHECK(r.head == 4);
  CHECK(r.grams == 502.8);
  CHECK(r.status == PackStatus::kRejected);
  CHECK(MustParse(*f, "LINE=oats-1\tWEIGHT=0.5kg").grams == 500.0);  // keys ignore case
  RecordParse p = Fails(*f, "line=oats-1 head=4");
  CHECK(p.error == RecordError::kMissingField);
  CHECK(p.field_name == "weight");
  CHECK(Fails(*f, "weight=500").field_name == "line");
  // Letters after a number read as a unit, as in the native format: "5OO" is 5 of unit "OO".
  CHECK(Fails(*f, "line=oats-1 weight=5OO").error == RecordError::kBadUnit);
  CHECK(Fails(*f, "line=oats-1 weight=5.0.0").error == RecordError::kBadWeight);

  FormatSettings c;
  c.kind = FormatKind::kKeyValue;
  c.pair_separator = ';';
  c.value_separator = ':';
  c.line_id = "honey-2";
  c.field(RecordField::kWeight).name = "NET";
  c.field(RecordField::kUnit).name = "U";
  c.field(RecordField::kTime).name = "T";
  c.time_format = TimeFormat::kEpochS;
  c.decimal_comma = true;
  auto g = Make(c);
  r = MustParse(*g, "T:1772431200.5;NET: 12,1 ;U:oz");
  CHECK(r.line == "honey-2");
  CHECK(r.grams == Approx(12.1 * kOunce).epsilon(1e-12));
  CHECK(r.time_ms == 1772431200500);
  CHECK(Fails(*g, "T:17724312xx;NET:12,1").error == RecordError::kBadTime);

  c.value_separator = ';';
  CHECK(MakeError(c) == "format.pair_separator: must differ from value_separator");
}

TEST_CASE("pattern: named groups become fields", "[format]") {
  FormatSettings s;
  s.kind = FormatKind::kPattern;
  s.pattern = R"(^(?<line>[\w.-]+) +H(?<head>\d+) +(?<weight>[-+]? *[\d.]+) *(?<unit>k?g)?$)";
  auto f = Make(s);
  RecordView r = MustParse(*f, "oats-1 H11 +  503.2 g");
  CHECK(r.line == "oats-1");
  CHECK(r.head == 11);
  CHECK(r.grams == 503.2);
  CHECK(MustParse(*f, "oats-1 H2 0.5011kg").grams == Approx(501.1).epsilon(1e-12));
  CHECK(MustParse(*f, "oats-1 H2 501.1").grams == 501.1);  // optional unit group unmatched
  CHECK(Fails(*f, "oats-1 X2 501.1").error == RecordError::kNoMatch);
  CHECK(Fails(*f, "oats-1 H2 5.0.1").error == RecordError::kBadWeight);
  CHECK(Fails(*f, std::string(5000, 'a')).error == RecordError::kTooLong);

  // Translation keeps (?:), escapes and classes with parentheses as they are.
  std::string out, error;
  std::array<int, kRecordFieldCount> groups{};
  REQUIRE(PatternFormat::TranslateNamedGroups(R"((?:S|U)[(]\((?<weight>\d+)(x)(?<time>\d*))", &out,
                                              &groups, &error));
  CHECK(out == R"((?:S|U)[(]\((\d+)(x)(\d*))");
  CHECK(groups[static_cast<std::size_t>(RecordField::kWeight)] == 1);
  CHECK(groups[static_cast<std::size_t>(RecordField::kTime)] == 3);

  FormatSettings bad = s;
  bad.pattern = "(?<net>\\d+)";
  CHECK(MakeError(bad) ==
        "pattern: group name \"net\" is not a field (line, head, weight, time, unit, status)");
  bad.pattern = "(?<line>\\w+) (?<head>\\d+)";
  CHECK(MakeError(bad) == "pattern: no (?<weight>...) group");
  bad.pattern = "(?<weight>\\d+";
  CHECK(MakeError(bad).rfind("pattern: not a valid regular expression", 0) == 0);
  bad.pattern = "(?<weight>\\d+)";
  CHECK(MakeError(bad) == "pattern: no (?<line>...) group and no line_id for the source");
  bad.line_id = "oats-1";
  CHECK(Make(bad) != nullptr);
}

TEST_CASE("json lines: keys, nesting, numbers and bad documents", "[format]") {
  FormatSettings s;
  s.kind = FormatKind::kJsonLines;
  s.field(RecordField::kWeight).name = "scale.net";
  s.field(RecordField::kTime).name = "ts";
  s.time_format = TimeFormat::kEpochMs;
  auto f = Make(s);
  RecordView r = MustParse(
      *f, R"({"line":"oats-1","head":3,"scale":{"net":503.4,"tare":12},"ts":1772431200094})");
  CHECK(r.line == "oats-1");
  CHECK(r.head == 3);
  CHECK(r.grams == 503.4);  // shortest round-trip text keeps the value exact
  CHECK(r.time_ms == 1772431200094);
  r = MustParse(*f, R"({"line":"oats-1","head":null,"scale":{"net":"0.5 kg"},"status":"error"})");
  CHECK(r.head == kNoHead);
  CHECK(r.grams == 500.0);
  CHECK(r.status == PackStatus::kError);
  CHECK_FALSE(r.has_time);

  CHECK(Fails(*f, R"({"line":"oats-1","scale":{"net":503.4})").error == RecordError::kBadSyntax);
  CHECK(Fails(*f, R"([1,2,3])").error == RecordError::kBadSyntax);
  RecordParse p = Fails(*f, R"({"line":"oats-1","scale":{"net":true}})");
  CHECK(p.error == RecordError::kBadWeight);
  CHECK(p.field_name == "weight");
  p = Fails(*f, R"({"line":"oats-1","scale":{"tare":12}})");
  CHECK(p.error == RecordError::kMissingField);
  CHECK(Fails(*f, R"({"line":"oats-1","scale":{"net":1},"ts":"2026-03-02T06:00:00Z"})").error ==
        RecordError::kBadTime);  // epoch_ms wants digits
}

TEST_CASE("weights: scale, offset, units, times: every format", "[format]") {
  FormatSettings s;
  s.scale = 0.1;       // the device sends tenths of a gram
  s.offset_g = -12.5;  // and gross weight: 12.5 g of tare off
  double grams = 0.0;
  REQUIRE(ReadWeight("5034", std::nullopt, s, &grams) == RecordError::kNone);
  CHECK(grams == Approx(503.4 - 12.5).epsilon(1e-12));
  s.scale = 1.0;
  s.offset_g = 0.0;
  s.unit = WeightUnit::kPound;
  REQUIRE(ReadWeight("1", std::nullopt, s, &grams) == RecordError::kNone);
  CHECK(grams == kPound);
  REQUIRE(ReadWeight("1", std::string_view("kg"), s, &grams) == RecordError::kNone);
  CHECK(grams == 1000.0);
  REQUIRE(ReadWeight("- 0.4 g", std::nullopt, s, &grams) == RecordError::kNone);
  CHECK(grams == -0.4);
  CHECK(ReadWeight("inf", std::nullopt, s, &grams) == RecordError::kBadWeight);
  CHECK(ReadWeight("nan", std::nullopt, s, &grams) == RecordError::kBadWeight);
  CHECK(ReadWeight("", std::nullopt, s, &grams) == RecordError::kBadWeight);
  CHECK(ReadWeight("12 mg", std::nullopt, s, &grams) == RecordError::kBadUnit);
  CHECK(ReadWeight("1e400", std::nullopt, s, &grams) == RecordError::kBadWeight);

  bool has = false;
  std::int64_t ms = 0;
  CHECK(ReadTime("1772431200", TimeFormat::kEpochS, &has, &ms));
  CHECK((has && ms == 1772431200000));
  CHECK(ReadTime("1772431200.0946", TimeFormat::kEpochS, &has, &ms));
  CHECK(ms == 1772431200094);  // fraction beyond ms truncated
  CHECK_FALSE(ReadTime("1772431200000", TimeFormat::kIso8601, &has, &ms));
  CHECK_FALSE(ReadTime("2026-03-02T06:00:00Z", TimeFormat::kEpochMs, &has, &ms));
  CHECK(ReadTime("2026-03-02T06:00:00+00:00", TimeFormat::kIso8601, &has, &ms));
  CHECK(ms == 1772431200000);
  CHECK(ReadTime("garbage", TimeFormat::kNone, &has, &ms));
  CHECK_FALSE(has);
  CHECK(ReadTime("", TimeFormat::kAuto, &has, &ms));
  CHECK_FALSE(has);

  StatusMapping m;
  m.other = PackStatus::kRejected;
  PackStatus st = PackStatus::kOk;
  CHECK(ReadStatus(" OK ", m, &st));
  CHECK(st == PackStatus::kOk);
  CHECK(ReadStatus("metal", m, &st));
  CHECK(st == PackStatus::kRejected);
}

// Collects what StreamIngest hands on.
class Collector : public IngestListener {
 public:
  void OnPack(std::string_view line, const Pack& pack) override {
    lines.emplace_back(line);
    packs.push_back(pack);
  }
  void OnProblem(const RecordProblem& p) override { problems.push_back(p); }
  std::vector<std::string> lines;
  std::vector<Pack> packs;
  std::vector<RecordProblem> problems;
};

TEST_CASE("stream ingest: a configured format, header per stream, restart", "[format]") {
  FormatSettings s = Delimited(';');
  s.header = HeaderMode::kNames;
  s.decimal_comma = true;
  s.line_id = "oats-1";
  s.field(RecordField::kWeight).name = "Net";
  s.field(RecordField::kHead).name = "Head";
  Plant plant{PlantSettings{}};
  Collector c;
  StreamIngest ingest(plant, c);
  ingest.SetFormat(Make(s), 64);
  std::vector<Finding> out;
  ingest.Feed("Head;Net\r\n1;500,1\r\n2;50", 1000, &out);
  ingest.Restart();  // cut mid-record: "2;50" is dropped and counted
  ingest.Feed("Head;Net\n3;501,5\n", 2000, &out);
  ingest.Feed(std::string(100, '9') + "\n4;502\n", 3000, &out);
  ingest.Finish(4000, &out);
  REQUIRE(c.packs.size() == 3);
  CHECK(c.packs[0].index == 0);
  CHECK(c.packs[0].grams == 500.1);
  CHECK(c.packs[0].time_ms == 1000);  // no time field: arrival
  CHECK(c.packs[1].index == 2);
  CHECK(c.packs[1].head == 3);
  CHECK(c.packs[2].index == 4);
  CHECK(c.lines[2] == "oats-1");
  REQUIRE(c.problems.size() == 2);
  CHECK(c.problems[0].index == 1);
  CHECK(c.problems[0].error == RecordError::kTruncated);
  CHECK(c.problems[0].length == 4);
  CHECK(c.problems[1].index == 3);
  CHECK(c.problems[1].error == RecordError::kTooLong);
  CHECK(ingest.counters().records == 5);
  CHECK(ingest.counters().malformed == 2);
}

TEST_CASE("stream ingest: the native descriptor equals the built-in native path", "[format]") {
  const std::string feed =
      "time,line,head,weight,status\n"
      "2026-03-02T06:00:00.094Z,oats-1,3,503.4\n"
      "1772431200594,oats-1,4,502.9,reject\n"
      ",honey-2,,0.3431kg\n"
      "bad,record\n"
      "2026-03-02T06:00:01Z,oats-1,5,17.6oz,error\n";
  Plant plant_a{PlantSettings{}}, plant_b{PlantSettings{}};
  Collector a, b;
  StreamIngest built_in(plant_a, a);
  StreamIngest described(plant_b, b);
  described.SetFormat(Make(FormatSettings{}), LineFramer::kDefaultMaxRecord);
  std::vector<Finding> out;
  built_in.Feed(feed, 7, &out);
  described.Feed(feed, 7, &out);
  REQUIRE(a.packs.size() == 4);
  REQUIRE(b.packs.size() == a.packs.size());
  for (std::size_t i = 0; i < a.packs.size(); ++i) {
    CHECK(a.lines[i] == b.lines[i]);
    CHECK(a.packs[i].index == b.packs[i].index);
    CHECK(a.packs[i].grams == b.packs[i].grams);
    CHECK(a.packs[i].time_ms == b.packs[i].time_ms);
    CHECK(a.packs[i].status == b.packs[i].status);
  }
  REQUIRE(b.problems.size() == 1);
  CHECK(b.problems[0].index == a.problems[0].index);
  CHECK(b.problems[0].error == RecordError::kColumnCount);
}

}  // namespace
}  // namespace heft
