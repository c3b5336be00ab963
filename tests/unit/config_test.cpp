// config_test.cpp — the YAML configuration loader (io/config_loader.h).
#include "io/config_loader.h"

#include <catch2/catch.hpp>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <string>
#include <system_error>
#include <vector>

#include <unistd.h>

namespace heft {
namespace {

using Lines = std::vector<std::string>;

Config MustLoad(const std::string& text) {
  Config config;
  std::vector<std::string> errors{"stale"};
  const Status status = LoadConfigText(text, "t.yaml", &config, &errors);
  INFO(status.message());
  REQUIRE(status.ok());
  REQUIRE(errors.empty());
  return config;
}

// Loads `text`, expects failure, and returns the error lines.
Lines Errors(const std::string& text) {
  Config config;
  config.listen.port = 4242;  // must survive a failed load
  std::vector<std::string> errors;
  const Status status = LoadConfigText(text, "t.yaml", &config, &errors);
  CHECK_FALSE(status.ok());
  REQUIRE_FALSE(errors.empty());
  // The status leads with the first error.
  CHECK(status.message().rfind(errors.front(), 0) == 0);
  CHECK(config.listen.port == 4242);
  return errors;
}

TEST_CASE("config: a complete file is read into every field", "[config]") {
  const Config c = MustLoad(R"(
listen: {address: 0.0.0.0, port: 7400, max_connections: 8}
storage:
  database: /var/lib/heft/plant.db
  raw_samples: false
  raw_retention_days: 0
  flush_interval_ms: 100
  batch_max_rows: 500
log: {file: /var/log/heft.log, level: debug}
defaults:
  false_alarms_per_day: 0.5
  pack_rate_per_min: 90
  min_shift_sigma: 1.5
  baseline_packs: 250
  silence_s: 45
  gross_low_ratio: 0.4
  gross_high_ratio: 2
max_lines: 12
lines:
  - id: oats-1
    product: Rolled oats 500 g
    nominal_g: 500
    target_g: 503.5
    heads: 12
    false_alarms_per_day: 2
    pack_rate_per_min: 150
    min_shift_sigma: 0.75
    baseline_packs: 400
    silence_s: 30
    gross_low_ratio: 0.6
    gross_high_ratio: 1.4
)");
  CHECK(c.path == "t.yaml");
  CHECK(c.listen.address == "0.0.0.0");
  CHECK(c.listen.port == 7400);
  CHECK(c.listen.max_connections == 8);
  CHECK(c.storage.database == "/var/lib/heft/plant.db");
  CHECK(c.storage.raw_samples == false);
  CHECK(c.storage.raw_retention_days == 0);
  CHECK(c.storage.flush_interval_ms == 100);
  CHECK(c.storage.batch_max_rows == 500);
  CHECK(c.log.file == "/var/log/heft.log");
  CHECK(c.log.level == "debug");

  const LineSettings& d = c.plant.defaults;
  CHECK(d.false_alarms_per_day == 0.5);
  CHECK(d.pack_rate_per_min == 90.0);
  CHECK(d.min_shift_sigma == 1.5);
  CHECK(d.baseline_packs == 250);
  CHECK(d.silence_ms == 45'000);
  CHECK(d.gross_low_ratio == 0.4);
  CHECK(d.gross_high_ratio == 2.0);
  CHECK(c.plant.max_lines == 12);

  REQUIRE(c.plant.lines.size() == 1);
  const LineSettings& oats = c.plant.lines.at("oats-1");
  CHECK(oats.product == "Rolled oats 500 g");
  CHECK(oats.nominal_g == 500.0);
  CHECK(oats.target_g == 503.5);
  CHECK(oats.heads == 12);
  CHECK(oats.false_alarms_per_day == 2.0);
  CHECK(oats.pack_rate_per_min == 150.0);
  CHECK(oats.min_shift_sigma == 0.75);
  CHECK(oats.baseline_packs == 400);
  CHECK(oats.silence_ms == 30'000);
  CHECK(oats.gross_low_ratio == 0.6);
  CHECK(oats.gross_high_ratio == 1.4);
}

TEST_CASE("config: an empty file gives the built-in defaults", "[config]") {
  for (const char* text : {"", "# nothing here\n", "---\n"}) {
    const Config c = MustLoad(text);
    const Config built_in;
    CHECK(c.listen.address == built_in.listen.address);
    CHECK(c.listen.port == 7311);
    CHECK(c.storage.database == "heft.db");
    CHECK(c.storage.batch_max_rows == 20'000);
    CHECK(c.log.level == "info");
    CHECK(c.plant.defaults.baseline_packs == 300);
    CHECK(c.plant.defaults.silence_ms == 60'000);
    CHECK(c.plant.max_lines == 1000);
    CHECK(c.plant.lines.empty());
  }
}

TEST_CASE("config: lines start from defaults, wherever defaults stand", "[config]") {
  // `defaults` after `lines` on purpose.
  const Config c = MustLoad(R"(
lines:
  - id: oats-1
    nominal_g: 500
    baseline_packs: 100
  - id: honey-2
    heads: 4
defaults:
  baseline_packs: 200
  silence_s: 20
  min_shift_sigma: 0.5
)");
  CHECK(c.plant.defaults.baseline_packs == 200);
  CHECK(c.plant.defaults.silence_ms == 20'000);
  const LineSettings& oats = c.plant.lines.at("oats-1");
  CHECK(oats.baseline_packs == 100);  // its own
  CHECK(oats.silence_ms == 20'000);   // from defaults
  CHECK(oats.min_shift_sigma == 0.5);
  CHECK(oats.nominal_g == 500.0);
  CHECK_FALSE(oats.target_g.has_value());
  const LineSettings& honey = c.plant.lines.at("honey-2");
  CHECK(honey.baseline_packs == 200);
  CHECK(honey.heads == 4);
  CHECK_FALSE(honey.nominal_g.has_value());
  // Keys set nowhere keep the built-in values.
  CHECK(honey.pack_rate_per_min == 120.0);
  CHECK(honey.gross_high_ratio == 1.5);
}

TEST_CASE("config: numbers are read as YAML 1.2 decimals, not stream conversions", "[config]") {
  const Config c = MustLoad("listen: {port: 010}\ndefaults: {pack_rate_per_min: 1.2e2}\n");
  CHECK(c.listen.port == 10);  // not octal 8
  CHECK(c.plant.defaults.pack_rate_per_min == 120.0);
  CHECK(MustLoad("listen: {port: +7312}\n").listen.port == 7312);
  CHECK(MustLoad("storage: {raw_samples: False}\n").storage.raw_samples == false);
  CHECK(MustLoad("log: {file: }\n").log.file.empty());
  CHECK(MustLoad("lines:\n  - id: 12\n").plant.lines.count("12") == 1);
}

// Each error kind, with its exact text and position.

TEST_CASE("config error: unknown keys", "[config]") {
  CHECK(Errors("lisen:\n  port: 1\n") ==
        Lines{"t.yaml:1:1: lisen: unknown key (expected one of: listen, storage, log, defaults, "
              "max_lines, lines, sources, alerting, http)"});
  CHECK(Errors("listen:\n  prot: 7311\n") ==
        Lines{"t.yaml:2:3: listen.prot: unknown key (expected one of: address, port, "
              "max_connections)"});
  CHECK(Errors("log: {file: x, colour: true}\n") ==
        Lines{"t.yaml:1:16: log.colour: unknown key (expected one of: file, level)"});
  CHECK(Errors("lines:\n  - id: oats-1\n    head: 12\n") ==
        Lines{"t.yaml:3:5: lines[0].head: unknown key (expected one of: id, product, nominal_g, "
              "target_g, heads, false_alarms_per_day, pack_rate_per_min, min_shift_sigma, "
              "baseline_packs, silence_s, gross_low_ratio, gross_high_ratio, detection, rules, "
              "rules_allow_unconfirmed, cost_per_kg, rejects_in_lot, lots, compliance, "
              "safe_target)"});
  CHECK(Errors("defaults:\n  nominal_g: 500\n") ==
        Lines{"t.yaml:2:3: defaults.nominal_g: is set per line, not in defaults"});
}

TEST_CASE("config error: wrong types", "[config]") {
  CHECK(Errors("listen:\n  port: abc\n") ==
        Lines{"t.yaml:2:9: listen.port: expected a whole number, got \"abc\""});
  CHECK(Errors("listen:\n  port: \"7311\"\n") ==
        Lines{"t.yaml:2:9: listen.port: expected a whole number, got the quoted string \"7311\""});
  CHECK(Errors("listen:\n  port: 7311.5\n") ==
        Lines{"t.yaml:2:9: listen.port: expected a whole number, got \"7311.5\""});
  CHECK(Errors("listen:\n  port:\n") ==
        Lines{"t.yaml:2:3: listen.port: expected a whole number, got nothing"});
  CHECK(Errors("listen:\n  port: [1, 2]\n") ==
        Lines{"t.yaml:2:9: listen.port: expected a whole number, got a list"});
  CHECK(Errors("defaults:\n  pack_rate_per_min: fast\n") ==
        Lines{"t.yaml:2:22: defaults.pack_rate_per_min: expected a number, got \"fast\""});
  CHECK(Errors("defaults:\n  min_shift_sigma: .nan\n") ==
        Lines{"t.yaml:2:20: defaults.min_shift_sigma: expected a number, got \".nan\""});
  CHECK(Errors("storage:\n  raw_samples: yes\n") ==
        Lines{"t.yaml:2:16: storage.raw_samples: expected true or false, got \"yes\""});
  CHECK(Errors("log:\n  file: {a: 1}\n") ==
        Lines{"t.yaml:2:9: log.file: expected a string, got a mapping"});
  CHECK(Errors("listen: 7311\n") == Lines{"t.yaml:1:9: listen: expected a mapping, got \"7311\""});
  CHECK(Errors("lines:\n  id: oats-1\n") ==
        Lines{"t.yaml:2:3: lines: expected a list, got a mapping"});
  CHECK(Errors("lines:\n  - oats-1\n") ==
        Lines{"t.yaml:2:5: lines[0]: expected a mapping, got \"oats-1\""});
  CHECK(Errors("- listen\n") == Lines{"t.yaml:1:1: (top level): expected a mapping, got a list"});
}

TEST_CASE("config error: values out of range", "[config]") {
  CHECK(Errors("listen: {port: 70000}\n") ==
        Lines{"t.yaml:1:16: listen.port: must be between 1 and 65535, got 70000"});
  CHECK(Errors("listen: {port: 0}\n") ==
        Lines{"t.yaml:1:16: listen.port: must be between 1 and 65535, got 0"});
  CHECK(Errors("defaults:\n  pack_rate_per_min: 0\n") ==
        Lines{"t.yaml:2:22: defaults.pack_rate_per_min: must be greater than 0, got 0"});
  CHECK(Errors("defaults:\n  false_alarms_per_day: -1\n") ==
        Lines{"t.yaml:2:25: defaults.false_alarms_per_day: must be greater than 0, got -1"});
  CHECK(Errors("defaults:\n  baseline_packs: 29\n") ==
        Lines{"t.yaml:2:19: defaults.baseline_packs: must be between 30 and 100000, got 29"});
  CHECK(Errors("defaults:\n  silence_s: 86401\n") ==
        Lines{"t.yaml:2:14: defaults.silence_s: must be between 1 and 86400, got 86401"});
  CHECK(Errors("defaults:\n  gross_low_ratio: 1\n") ==
        Lines{"t.yaml:2:20: defaults.gross_low_ratio: must be at least 0 and less than 1, got 1"});
  CHECK(
      Errors("defaults:\n  gross_high_ratio: 1\n") ==
      Lines{
          "t.yaml:2:21: defaults.gross_high_ratio: must be greater than 1 and at most 10, got 1"});
  CHECK(
      Errors("defaults:\n  min_shift_sigma: 0\n") ==
      Lines{"t.yaml:2:20: defaults.min_shift_sigma: must be greater than 0 and at most 10, got 0"});
  CHECK(Errors("lines:\n  - id: oats-1\n    nominal_g: 0.05\n") ==
        Lines{"t.yaml:3:16: lines[0].nominal_g: must be between 0.1 and 100000, got 0.05"});
  CHECK(Errors("lines:\n  - id: oats-1\n    target_g: 100001\n") ==
        Lines{"t.yaml:3:15: lines[0].target_g: must be between 0.1 and 100000, got 100001"});
  CHECK(Errors("lines:\n  - id: oats-1\n    heads: 257\n") ==
        Lines{"t.yaml:3:12: lines[0].heads: must be between 0 and 256, got 257"});
  CHECK(Errors("log: {level: verbose}\n") ==
        Lines{"t.yaml:1:14: log.level: must be one of trace, debug, info, warn, error; got "
              "\"verbose\""});
  CHECK(Errors("storage: {database: \"\"}\n") ==
        Lines{"t.yaml:1:21: storage.database: must not be empty"});
  CHECK(Errors("max_lines: 1\nlines:\n  - id: a\n  - id: b\n") ==
        Lines{"t.yaml:3:3: lines: lists 2 lines, more than max_lines (1)"});
}

TEST_CASE("config error: line ids", "[config]") {
  CHECK(Errors("lines:\n  - id: oats-1\n  - id: oats-1\n") ==
        Lines{"t.yaml:3:9: lines[1].id: duplicate line id \"oats-1\" (first at line 2)"});
  CHECK(Errors("lines:\n  - id: \"\"\n") == Lines{"t.yaml:2:9: lines[0].id: must not be empty"});
  CHECK(Errors("lines:\n  - id:\n    heads: 1\n") ==
        Lines{"t.yaml:2:5: lines[0].id: must not be empty"});
  CHECK(Errors("lines:\n  - product: oats\n") ==
        Lines{"t.yaml:2:5: lines[0]: missing required key \"id\""});
  CHECK(Errors("lines:\n  - id: oats 1\n") ==
        Lines{"t.yaml:2:9: lines[0].id: \"oats 1\" is not a line id (1 to 64 characters of A-Z, "
              "a-z, 0-9, '_', '.', '-')"});
  const std::string long_id(65, 'a');
  CHECK(Errors("lines:\n  - id: " + long_id + "\n") ==
        Lines{"t.yaml:2:9: lines[0].id: \"" + long_id +
              "\" is not a line id (1 to 64 characters of A-Z, a-z, 0-9, '_', '.', '-')"});
}

TEST_CASE("config error: repeated keys", "[config]") {
  CHECK(Errors("listen:\n  port: 1\n  port: 2\n") ==
        Lines{"t.yaml:3:3: listen.port: duplicate key (first at line 2)"});
  CHECK(Errors("log: {}\nlog: {}\n") == Lines{"t.yaml:2:1: log: duplicate key (first at line 1)"});
}

TEST_CASE("config error: all problems are reported at once, in file order", "[config]") {
  Config config;
  std::vector<std::string> errors;
  const Status status = LoadConfigText(R"(lines:
  - id: oats-1
    heads: many
  - id: oats-1
defaults:
  silence_s: 0
listen:
  port: 99999
  adress: 0.0.0.0
)",
                                       "plant.yaml", &config, &errors);
  const Lines expected = {
      "plant.yaml:3:12: lines[0].heads: expected a whole number, got \"many\"",
      "plant.yaml:4:9: lines[1].id: duplicate line id \"oats-1\" (first at line 2)",
      "plant.yaml:6:14: defaults.silence_s: must be between 1 and 86400, got 0",
      "plant.yaml:8:9: listen.port: must be between 1 and 65535, got 99999",
      "plant.yaml:9:3: listen.adress: unknown key (expected one of: address, port, "
      "max_connections)",
  };
  CHECK(errors == expected);
  CHECK(status.message() == expected.front() + " (and 4 more errors)");
}

TEST_CASE("config error: YAML syntax errors say where", "[config]") {
  // Positions and wording are yaml-cpp 0.7's (Debian 12).
  CHECK(Errors("listen: {port: 7311\nstorage:\n  database: x\n") ==
        Lines{"t.yaml:2:8: YAML syntax error: end of map flow not found"});
  CHECK(Errors("listen:\n  port: 1\n   address: x\n") ==
        Lines{"t.yaml:3:11: YAML syntax error: illegal map value"});
  CHECK(Errors("a: *nowhere\n") ==
        Lines{"t.yaml:1:4: YAML syntax error: the referenced anchor is not defined"});
}

TEST_CASE("config: files", "[config]") {
  namespace fs = std::filesystem;
  const fs::path dir =
      fs::temp_directory_path() / ("heft-config-test-" + std::to_string(::getpid()));
  fs::create_directories(dir);
  struct Cleanup {
    fs::path dir;
    ~Cleanup() {
      std::error_code ignored;
      fs::remove_all(dir, ignored);
    }
  } cleanup{dir};

  SECTION("missing file") {
    const std::string path = (dir / "no-such.yaml").string();
    Config config;
    std::vector<std::string> errors;
    const Status status = LoadConfigFile(path, &config, &errors);
    CHECK_FALSE(status.ok());
    CHECK(status.message() == path + ": cannot read configuration file: No such file or directory");
    CHECK(errors == Lines{status.message()});
  }
  SECTION("a directory is not a file") {
    Config config;
    const Status status = LoadConfigFile(dir.string(), &config, nullptr);
    CHECK(status.message() == dir.string() + ": cannot read configuration file: Is a directory");
  }
  SECTION("errors name the file") {
    const std::string path = (dir / "bad.yaml").string();
    std::ofstream(path) << "listen:\n  port: 0\n";
    Config config;
    std::vector<std::string> errors;
    CHECK_FALSE(LoadConfigFile(path, &config, &errors).ok());
    CHECK(errors == Lines{path + ":2:9: listen.port: must be between 1 and 65535, got 0"});
  }
  SECTION("a good file") {
    const std::string path = (dir / "good.yaml").string();
    std::ofstream(path) << "listen:\n  port: 7399\n";
    Config config;
    CHECK(LoadConfigFile(path, &config, nullptr).ok());
    CHECK(config.path == path);
    CHECK(config.listen.port == 7399);
  }
}

TEST_CASE("config: the shipped demo and example files load", "[config]") {
  const std::string source = HEFT_SOURCE_DIR;
  Config demo;
  std::vector<std::string> errors;
  const Status status = LoadConfigFile(source + "/config/demo.yaml", &demo, &errors);
  INFO(status.message());
  REQUIRE(status.ok());
  CHECK(demo.listen.port == 7311);
  CHECK(demo.storage.database == "heft-demo.db");
  CHECK(demo.plant.defaults.baseline_packs == 200);
  CHECK(demo.plant.defaults.silence_ms == 20'000);
  REQUIRE(demo.plant.lines.size() == 3);
  const LineSettings& oats1 = demo.plant.lines.at("oats-1");
  CHECK(oats1.nominal_g == 500.0);
  CHECK(oats1.target_g == 503.0);
  CHECK(oats1.heads == 12);
  CHECK(oats1.baseline_packs == 200);
  CHECK(oats1.silence_ms == 20'000);
  const LineSettings& oats2 = demo.plant.lines.at("oats-2");
  CHECK(oats2.nominal_g == 1000.0);
  CHECK(oats2.target_g == 1004.0);
  CHECK(oats2.heads == 12);
  const LineSettings& honey = demo.plant.lines.at("honey-2");
  CHECK(honey.nominal_g == 340.0);
  CHECK(honey.target_g == 343.0);
  CHECK(honey.heads == 4);

  Config example;
  const Status example_status = LoadConfigFile(source + "/config/example.yaml", &example, &errors);
  INFO(example_status.message());
  REQUIRE(example_status.ok());
  // The example spells out the built-in defaults, so it must equal them.
  const Config built_in;
  CHECK(example.listen.address == built_in.listen.address);
  CHECK(example.listen.port == built_in.listen.port);
  CHECK(example.listen.max_connections == built_in.listen.max_connections);
  CHECK(example.storage.database == built_in.storage.database);
  CHECK(example.storage.raw_samples == built_in.storage.raw_samples);
  CHECK(example.storage.raw_retention_days == built_in.storage.raw_retention_days);
  CHECK(example.storage.flush_interval_ms == built_in.storage.flush_interval_ms);
  CHECK(example.storage.batch_max_rows == built_in.storage.batch_max_rows);
  CHECK(example.log.file == built_in.log.file);
  CHECK(example.log.level == built_in.log.level);
  const LineSettings& d = example.plant.defaults;
  const LineSettings& b = built_in.plant.defaults;
  CHECK(d.false_alarms_per_day == b.false_alarms_per_day);
  CHECK(d.pack_rate_per_min == b.pack_rate_per_min);
  CHECK(d.min_shift_sigma == b.min_shift_sigma);
  CHECK(d.baseline_packs == b.baseline_packs);
  CHECK(d.silence_ms == b.silence_ms);
  CHECK(d.gross_low_ratio == b.gross_low_ratio);
  CHECK(d.gross_high_ratio == b.gross_high_ratio);
  CHECK(example.plant.max_lines == built_in.plant.max_lines);
  REQUIRE(example.plant.lines.size() == 1);
  CHECK(example.plant.lines.at("oats-1").pack_rate_per_min == 150.0);
}

}  // namespace
}  // namespace heft

namespace heft {
namespace {

TEST_CASE("config: compliance keys are read, with rule tables loaded once", "[config][lots]") {
  const Config c = MustLoad(R"(
defaults:
  rules: eu-average-quantity
  cost_per_kg: 1.5
  lots: {by: shifts, shifts: ["06:00", "14:00", "22:00"], utc_offset_minutes: 60}
  compliance: {min_packs: 40, mean_warn_probability: 0.1, t2_alarm: false, hold_off_packs: 80}
  safe_target: {t2_risk: 0.001, confidence: 0.95, t1_share_of_limit: 0.4, hours_per_year: 4000}
lines:
  - id: oats-1
    nominal_g: 500
    cost_per_kg: 2.4
  - id: honey-2
    nominal_g: 340
    lots: {by: count, packs_per_lot: 5000}
    rejects_in_lot: true
  - id: bare-1
)");
  const LineSettings& oats = c.plant.lines.at("oats-1");
  CHECK(oats.cost_per_kg == 2.4);
  CHECK(oats.lots.boundary == comply::LotBoundary::kShifts);
  CHECK(oats.lots.shift_start_minutes == std::vector<int>{360, 840, 1320});
  CHECK(oats.lots.utc_offset_minutes == 60);
  CHECK(oats.compliance.min_packs == 40);
  CHECK(oats.compliance.mean_warn_probability == 0.1);
  CHECK_FALSE(oats.compliance.t2_alarm);
  CHECK(oats.compliance_hold_off_packs == 80);
  CHECK(oats.safe_target.tail_probability == 0.001);
  CHECK(oats.safe_target.mean_confidence == 0.95);
  CHECK(oats.safe_target.t1_share_of_limit == 0.4);
  CHECK(oats.safe_target.hours_per_year == 4000);
  const LineSettings& honey = c.plant.lines.at("honey-2");
  CHECK(honey.cost_per_kg == 1.5);
  CHECK(honey.lots.boundary == comply::LotBoundary::kCount);
  CHECK(honey.lots.packs_per_lot == 5000);
  CHECK(honey.rejects_in_lot);
  // One table, loaded once; every line names it by its resolved path.
  REQUIRE(c.plant.rule_tables.size() == 1);
  const auto& [path, table] = *c.plant.rule_tables.begin();
  CHECK(table->id == "eu-average-quantity");
  CHECK(oats.rules == path);
  CHECK(honey.rules == path);
  CHECK(c.plant.defaults.rules == path);
}

TEST_CASE("config: lines with a nominal get the shipped EU table by default", "[config][lots]") {
  const Config c = MustLoad("lines:\n  - {id: oats-1, nominal_g: 500}\n  - {id: x, rules: none}\n");
  REQUIRE(c.plant.rule_tables.size() == 1);
  CHECK(c.plant.rule_tables.begin()->second->id == "eu-average-quantity");
  CHECK(c.plant.lines.at("oats-1").lots.boundary == comply::LotBoundary::kHour);
  CHECK(c.plant.lines.at("x").rules == "none");
}

TEST_CASE("config: bad compliance keys say where and why", "[config][lots]") {
  Lines e = Errors("lines:\n  - id: oats-1\n    nominal_g: 500\n    lots: {by: weekly}\n");
  REQUIRE(e.size() == 1);
  CHECK(e[0].rfind("t.yaml:4:16: lines[0].lots.by: must be one of count, hour, shifts, manual",
                   0) == 0);

  e = Errors("lines:\n  - id: oats-1\n    nominal_g: 500\n    lots: {by: count}\n");
  REQUIRE(e.size() == 1);
  CHECK(e[0].rfind("t.yaml:4:11: lines[0].lots: lot policy: count lots need packs_per_lot", 0) ==
        0);

  e = Errors("defaults:\n  lots:\n    by: shifts\n    shifts: [\"14:00\", \"06:00\"]\n");
  REQUIRE(e.size() == 1);
  CHECK(e[0].find("defaults.lots.shifts[1]: shift starts must be in increasing order") !=
        std::string::npos);

  e = Errors("defaults:\n  lots: {by: shifts, shifts: [\"6h\"]}\n");
  REQUIRE(e.size() == 1);
  CHECK(e[0].find("defaults.lots.shifts[0]: expected a time of day like \"06:00\"") !=
        std::string::npos);

  e = Errors("lines:\n  - id: oats-1\n    nominal_g: 500\n    rules: no-such-table.yaml\n");
  REQUIRE(e.size() == 1);
  CHECK(e[0].rfind("t.yaml:4:12: lines[0].rules: rule table \"no-such-table.yaml\" not found", 0) ==
        0);

  e = Errors("defaults:\n  safe_target: {t2_risk: 0.5, confidence: 1.0}\n  cost_per_kg: -1\n");
  REQUIRE(e.size() == 3);
  CHECK(e[0].find("defaults.safe_target.t2_risk: must be between") != std::string::npos);
  CHECK(e[1].find("defaults.safe_target.confidence: must be at least 0.5 and less than 1") !=
        std::string::npos);
  CHECK(e[2].find("defaults.cost_per_kg: must be between 0 and") != std::string::npos);

  e = Errors("defaults:\n  compliance: {mean_warn_probability: 0.6, mean_alarm_probability: 0.5}\n");
  REQUIRE(e.size() == 1);
  CHECK(e[0].find("defaults.compliance: warning probabilities must not be above") !=
        std::string::npos);

  e = Errors("defaults:\n  compliance: {hold_of_packs: 3}\n");
  REQUIRE(e.size() == 1);
  CHECK(e[0].find("defaults.compliance.hold_of_packs: unknown key") != std::string::npos);

  // A nominal the table does not cover (the EU table ends at 10 kg).
  e = Errors("lines:\n  - {id: big-1, nominal_g: 60000}\n");
  REQUIRE(e.size() == 1);
  CHECK(e[0].find("lines[0]: nominal 60000 g and rule table eu-average-quantity") !=
        std::string::npos);
}

}  // namespace
}  // namespace heft

// --- sources: (io/source_config_loader.h) ---
namespace heft {
namespace {

TEST_CASE("config: sources of every type with their formats", "[config][format]") {
  const Config c = MustLoad(R"(
sources:
  - name: gateway-1
    type: tcp-connect
    host: 127.0.0.1
    port: 4001
    retry_initial_ms: 200
    retry_max_ms: 5000
    max_attempts: 0
    keepalive_s: 20
    format:
      type: key_value
      pair_separator: ";"
      value_separator: ":"
      fields: {weight: NET, line: LN}
  - name: oats-1-scale
    type: serial
    device: /dev/ttyUSB0
    baud: 9600
    data_bits: 7
    parity: even
    stop_bits: 1
    flow_control: none
    line_id: oats-1
    format:
      type: pattern
      pattern: '^(?<weight>[-+ .0-9]+) *(?<unit>k?g)$'
  - name: export
    type: file-follow
    path: /var/lib/filler/export.csv
    poll_ms: 500
    start_at: beginning
    max_record_bytes: 8192
    format:
      type: delimited
      delimiter: ";"
      decimal_comma: true
      header: names
      fields: {line: Line, weight: 4, head: "Head"}
      unit: kg
      scale: 0.001
      offset_g: -1.5
      time_format: epoch_s
      status: {ok: [OK], rejected: [UNDER, OVER], error: ERR, other: rejected}
  - name: lab
    type: tcp-listen
    port: 0
    allow: [127.0.0.1, 10.20.0.0/24]
    max_connections: 4
  - name: pipe
    type: stdin
    format: {type: json_lines}
)");
  REQUIRE(c.sources.size() == 5);
  CHECK(c.listen.enabled == false);  // sources and no listen block: no default listener
  const SourceSettings& g = c.sources[0];
  CHECK(g.type == SourceType::kTcpConnect);
  CHECK(g.format.kind == FormatKind::kKeyValue);
  CHECK(g.format.pair_separator == ';');
  CHECK(g.format.field(RecordField::kWeight).name == "NET");
  const SourceSettings& s = c.sources[1];
  CHECK(s.data_bits == 7);
  CHECK(s.parity == SerialParity::kEven);
  CHECK(s.format.line_id == "oats-1");
  const SourceSettings& f = c.sources[2];
  CHECK(f.start_at_end == false);
  CHECK(f.max_record_bytes == 8192);
  CHECK(f.format.field(RecordField::kWeight).column == 3);  // config counts columns from 1
  CHECK(f.format.field(RecordField::kHead).name == "Head");
  CHECK(f.format.unit == WeightUnit::kKilogram);
  CHECK(f.format.scale == 0.001);
  CHECK(f.format.time_format == TimeFormat::kEpochS);
  CHECK(f.format.status.error == std::vector<std::string>{"ERR"});
  CHECK(f.format.status.other == PackStatus::kRejected);
  CHECK(c.sources[3].allow.size() == 2);
  CHECK(c.sources[4].format.kind == FormatKind::kJsonLines);
}

TEST_CASE("config: with a listen block, sources add to the default listener",
          "[config][format]") {
  const Config c = MustLoad("listen:\n  port: 7400\nsources:\n  - {name: p, type: stdin}\n");
  CHECK(c.listen.enabled);
  CHECK(MustLoad("listen:\n  port: 7400\n").listen.enabled);
}

TEST_CASE("config: source errors name file, line, column and key path, all at once",
          "[config][format]") {
  const Lines errors = Errors(R"(sources:
  - name: a
    type: serial
    baud: 9601
    parity: mark
    port: 4
  - name: b
    type: tcp-connect
    host: gw
  - name: a
    type: stdin
  - type: carrier-pigeon
  - name: d
    type: tcp-listen
    port: 70000
    allow: [10.0.0.0/33, nonsense]
  - name: e
    type: stdin
    line_id: oats-1
    format: {type: delimited, fields: {weight: 0}}
  - name: f
    type: stdin
    format: {type: pattern, pattern: '(?<net>\d+)'}
  - name: g
    type: stdin
    format: {type: delimited, fields: {line: 1}, delimiter: ";;"}
)");
  const Lines want = {
      "t.yaml:2:5: sources[0]: missing required key \"device\"",
      "t.yaml:4:11: sources[0].baud: 9601 is not a standard rate (e.g. 1200, 2400, 4800, 9600, "
      "19200, 38400, 57600, 115200)",
      "t.yaml:5:13: sources[0].parity: must be none, even or odd; got \"mark\"",
      "t.yaml:6:5: sources[0].port: unknown key for type serial (expected one of: name, type, "
      "line_id, max_record_bytes, format, device, baud, data_bits, parity, stop_bits, "
      "flow_control, retry_initial_ms, retry_max_ms)",
      "t.yaml:7:5: sources[1]: missing required key \"port\"",
      "t.yaml:10:11: sources[2].name: duplicate source name \"a\" (first at line 2)",
      "t.yaml:12:11: sources[3].type: must be tcp-listen, tcp-connect, serial, file-follow or "
      "stdin; got \"carrier-pigeon\"",
      "t.yaml:15:11: sources[4].port: must be between 0 and 65535, got 70000",
      "t.yaml:16:12: sources[4].allow: \"10.0.0.0/33\": prefix length must be 0..32",
      "t.yaml:16:12: sources[4].allow: \"nonsense\" is not an IP address or prefix (e.g. "
      "10.20.0.0/24)",
      "t.yaml:20:48: sources[5].format.fields.weight: must be between 1 and 1000, got 0",
      "t.yaml:23:13: sources[6].format.pattern: group name \"net\" is not a field (line, head, "
      "weight, time, unit, status)",
      "t.yaml:26:61: sources[7].format.delimiter: expected one character (or tab, space), got "
      "the quoted string \";;\"",
  };
  CHECK(errors == want);
}

TEST_CASE("config: the example's sources block loads", "[config][format]") {
  Config example;
  std::vector<std::string> errors;
  const Status status =
      LoadConfigFile(std::string(HEFT_SOURCE_DIR) + "/config/example.yaml", &example, &errors);
  INFO(status.message());
  REQUIRE(status.ok());
  // The example documents every source type with its format.
  REQUIRE(example.sources.size() >= 5);
  CHECK(example.listen.enabled);
}

}  // namespace
}  // namespace heft

namespace heft {
namespace {

TEST_CASE("config: detector tuning block in defaults and per line", "[config]") {
  const auto c = MustLoad(
      "defaults:\n"
      "  detection: {drift_lambda: 0.1, stuck_packs: 12, run_rules: false}\n"
      "lines:\n"
      "  - id: oats-1\n"
      "    detection: {cycle_window_packs: 1024, subgroup_packs: 6}\n");
  CHECK(c.plant.defaults.drift_lambda == 0.1);
  CHECK(c.plant.defaults.stuck_packs == 12);
  CHECK_FALSE(c.plant.defaults.run_rules);
  const LineSettings& oats = c.plant.lines.at("oats-1");
  CHECK(oats.drift_lambda == 0.1);  // inherited
  CHECK(oats.cycle_window_packs == 1024);
  CHECK(oats.subgroup_packs == 6);
  CHECK(Errors("defaults:\n  detection: {drift_lamda: 0.1}\n").size() == 1);
  CHECK(Errors("defaults:\n  detection:\n    stuck_packs: 1\n") ==
        Lines{"t.yaml:3:18: defaults.detection.stuck_packs: must be between 2 and 100000, got 1"});
}

}  // namespace
}  // namespace heft
