// config_loader.cpp — YAML configuration → Config, with every problem reported
// as "FILE:LINE:COLUMN: KEY.PATH: reason" (1-based line and column).
//
// yaml-cpp throws; all of that stays in this file. Scalars are converted here
// with std::from_chars rather than yaml-cpp's stream conversions, which would
// read "010" as octal and depend on the stream's locale.
#include "io/config_loader.h"

#include <yaml-cpp/yaml.h>

#include <algorithm>
#include <array>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <exception>
#include <filesystem>
#include <initializer_list>
#include <map>
#include <optional>
#include <span>
#include <string_view>
#include <system_error>
#include <utility>

#include <fmt/format.h>

#include "core/record/native_record.h"
#include "io/alerting_loader.h"
#include "io/rule_table_finder.h"
#include "io/source_config_loader.h"

namespace heft {
namespace {

constexpr std::string_view kTopLevel = "(top level)";

using std::literals::string_view_literals::operator""sv;
using KeyList = std::span<const std::string_view>;

// The schema's keys, per block. A line entry takes kLineOnlyKeys and
// kDetectorKeys; a `defaults` block only kDetectorKeys.
constexpr std::array kTopKeys = {"listen"sv, "storage"sv, "log"sv,      "defaults"sv, "max_lines"sv,
                                 "lines"sv,  "sources"sv, "alerting"sv, "http"sv};
constexpr std::array kListenKeys = {"address"sv, "port"sv, "max_connections"sv};
constexpr std::array kStorageKeys = {"database"sv,           "raw_samples"sv,
                                     "raw_retention_days"sv, "flush_interval_ms"sv,
                                     "batch_max_rows"sv,     "checkpoint_interval_s"sv};
constexpr std::array kLogKeys = {"file"sv, "level"sv};
constexpr std::array kHttpKeys = {"enabled"sv, "address"sv, "port"sv, "token"sv};
constexpr std::array kDetectorKeys = {
    "false_alarms_per_day"sv, "pack_rate_per_min"sv, "min_shift_sigma"sv,
    "baseline_packs"sv,       "silence_s"sv,         "gross_low_ratio"sv,
    "gross_high_ratio"sv,     "detection"sv};
// Detector tuning (`detection:` inside defaults or a line); 0 counts mean "published default".
constexpr std::array kDetectionKeys = {"drift_lambda"sv,        "head_shift_sigma"sv,
                                       "spread_ratio"sv,        "min_cycle_sigma"sv,
                                       "cycle_window_packs"sv,  "cycle_every_packs"sv,
                                       "run_rules"sv,           "subgroup_packs"sv,
                                       "run_one_side_count"sv,  "run_trend_count"sv,
                                       "run_sawtooth_count"sv,  "run_hugging_count"sv,
                                       "run_avoiding_count"sv,  "stuck_packs"sv,
                                       "outlier_burst_packs"sv, "settling_alarm_packs"sv,
                                       "baseline_block_packs"sv};
constexpr std::array kLineOnlyKeys = {"id"sv, "product"sv, "nominal_g"sv, "target_g"sv, "heads"sv};
// Net-content compliance keys, allowed in `defaults` and in line entries.
constexpr std::array kComplianceKeys = {"rules"sv,       "rules_allow_unconfirmed"sv,
                                        "cost_per_kg"sv, "rejects_in_lot"sv,
                                        "lots"sv,        "compliance"sv,
                                        "safe_target"sv};
constexpr std::array kLotKeys = {"by"sv, "packs_per_lot"sv, "shifts"sv, "utc_offset_minutes"sv};
constexpr std::array kComplianceAlertKeys = {"min_packs"sv,
                                             "mean_warn_probability"sv,
                                             "mean_alarm_probability"sv,
                                             "t1_warn_share_of_limit"sv,
                                             "t1_share_min_packs"sv,
                                             "t1_warn_probability"sv,
                                             "t1_alarm_probability"sv,
                                             "t2_alarm"sv,
                                             "hold_off_packs"sv};
constexpr std::array kSafeTargetKeys = {"t2_risk"sv, "confidence"sv, "t1_share_of_limit"sv,
                                        "mean_margin_g"sv, "hours_per_year"sv};

// An allowed numeric interval; open ends exclude the bound.
struct Range {
  double low;
  double high;
  bool low_open = false;
  bool high_open = false;
  bool has_high = true;

  bool Contains(double v) const {
    if (low_open ? !(v > low) : !(v >= low)) return false;
    if (!has_high) return true;
    return high_open ? v < high : v <= high;
  }
};

Range Closed(double low, double high) { return Range{low, high}; }
Range Above(double low) { return Range{low, 0.0, true, false, false}; }
Range AboveAtMost(double low, double high) { return Range{low, high, true, false, true}; }
Range AtLeastBelow(double low, double high) { return Range{low, high, false, true, true}; }

std::string FormatBound(double v) { return fmt::format("{}", v); }

std::string DescribeRange(const Range& r) {
  if (!r.low_open && !r.high_open && r.has_high) {
    return fmt::format("must be between {} and {}", FormatBound(r.low), FormatBound(r.high));
  }
  std::string text =
      fmt::format("must be {} {}", r.low_open ? "greater than" : "at least", FormatBound(r.low));
  if (r.has_high) {
    text += fmt::format(" and {} {}", r.high_open ? "less than" : "at most", FormatBound(r.high));
  }
  return text;
}

std::string Join(std::string_view path, std::string_view key) {
  if (path.empty()) return std::string(key);
  return fmt::format("{}.{}", path, key);
}

std::string DescribeNode(const YAML::Node& node) {
  switch (node.Type()) {
    case YAML::NodeType::Null:
      return "nothing";
    case YAML::NodeType::Map:
      return "a mapping";
    case YAML::NodeType::Sequence:
      return "a list";
    case YAML::NodeType::Scalar:
      // yaml-cpp tags quoted scalars "!" and plain ones "?".
      if (node.Tag() == "!") return fmt::format("the quoted string \"{}\"", node.Scalar());
      return fmt::format("\"{}\"", node.Scalar());
    case YAML::NodeType::Undefined:
      break;
  }
  return "nothing";
}

bool IsPlainScalar(const YAML::Node& node) { return node.IsScalar() && node.Tag() != "!"; }

// YAML 1.2 core-schema integer: [-+]?[0-9]+ (no octal or hex, no separators).
std::optional<std::int64_t> ParseInteger(std::string_view s) {
  if (!s.empty() && s.front() == '+') s.remove_prefix(1);
  if (s.empty()) return std::nullopt;
  std::int64_t value = 0;
  const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), value);
  if (ec != std::errc() || end != s.data() + s.size()) return std::nullopt;
  return value;
}

// A finite decimal number, e.g. "500", "-1.5", "2e3"; never inf or nan.
std::optional<double> ParseNumber(std::string_view s) {
  if (!s.empty() && s.front() == '+') s.remove_prefix(1);
  const std::string_view digits = !s.empty() && s.front() == '-' ? s.substr(1) : s;
  if (digits.empty() ||
      !(digits.front() == '.' || (digits.front() >= '0' && digits.front() <= '9')))
    return std::nullopt;
  double value = 0.0;
  const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), value);
  if (ec != std::errc() || end != s.data() + s.size() || !std::isfinite(value)) return std::nullopt;
  return value;
}

class Loader {
 public:
  explicit Loader(std::string name) : name_(std::move(name)) {}

  void Error(const YAML::Mark& mark, std::string_view path, std::string_view reason) {
    const int line = mark.is_null() ? 0 : mark.line + 1;
    const int column = mark.is_null() ? 0 : mark.column + 1;
    errors_.push_back(
        {line, column, fmt::format("{}:{}:{}: {}: {}", name_, line, column, path, reason)});
  }

  // Appends the errors found, in file order (they are found block by block).
  void TakeErrors(std::vector<std::string>* out) {
    std::stable_sort(errors_.begin(), errors_.end(), [](const Found& a, const Found& b) {
      return std::pair(a.line, a.column) < std::pair(b.line, b.column);
    });
    for (Found& e : errors_) out->push_back(std::move(e.text));
    errors_.clear();
  }

  void Load(const YAML::Node& root, Config* config);

 private:
  // Calls handle(key, value, path) for each key of `map` that is in `known`;
  // reports non-mappings, unknown and repeated keys. A null block (`listen:`
  // with nothing after it) is an empty mapping.
  // Keys in `per_line` are refused with a note that they belong to a line entry.
  template <class Handler>
  void ForEachKey(const YAML::Node& map, std::string_view path,
                  std::initializer_list<KeyList> known, KeyList per_line, Handler&& handle);

  bool ReadString(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
                  std::string* out);
  bool ReadNonEmptyString(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
                          std::string* out);
  bool ReadBool(const YAML::Node& node, const YAML::Mark& mark, std::string_view path, bool* out);
  template <class Int>
  bool ReadInt(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
               std::int64_t low, std::int64_t high, Int* out);
  bool ReadDouble(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
                  const Range& range, double* out);

  void LoadDetection(const YAML::Node& node, std::string_view path, LineSettings* out);
  void LoadListen(const YAML::Node& node, ListenSettings* out);
  void LoadStorage(const YAML::Node& node, StorageSettings* out);
  void LoadLog(const YAML::Node& node, LogSettings* out);
  void LoadHttp(const YAML::Node& node, HttpSettings* out);
  // One of kDetectorKeys; returns false if `key` is not one.
  bool LoadDetectorKey(std::string_view key, const YAML::Node& value, const YAML::Mark& mark,
                       std::string_view path, LineSettings* out);
  void LoadDefaults(const YAML::Node& node, LineSettings* out);
  void LoadLines(const YAML::Node& node, PlantSettings* plant);
  // One of kComplianceKeys; returns false if `key` is not one.
  bool LoadComplianceKey(std::string_view key, const YAML::Node& value, const YAML::Mark& mark,
                         std::string_view path, LineSettings* out);
  void LoadLots(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
                comply::LotPolicy* out);
  void LoadComplianceAlert(const YAML::Node& node, std::string_view path, LineSettings* out);
  void LoadSafeTarget(const YAML::Node& node, std::string_view path,
                      comply::SafeTargetSettings* out);
  // Loads the rule tables the lines name (once per file) into the plant settings.
  void ResolveRules(Config* config);

  struct RulesKey {  // where a `rules` key was given
    YAML::Mark mark;
    std::string path;
  };
  struct PendingLine {  // a line whose rule table is resolved after loading
    std::string id;
    std::optional<RulesKey> rules;
    YAML::Mark mark;  // the line entry
    std::string path;
  };
  std::optional<RulesKey> rules_given_;  // set by LoadComplianceKey("rules")
  std::optional<RulesKey> defaults_rules_;
  std::vector<PendingLine> pending_lines_;

  struct Found {
    int line;
    int column;
    std::string text;
  };
  std::string name_;
  std::vector<Found> errors_;
};

template <class Handler>
void Loader::ForEachKey(const YAML::Node& map, std::string_view path,
                        std::initializer_list<KeyList> known, KeyList per_line, Handler&& handle) {
  if (map.IsNull()) return;
  if (!map.IsMap()) {
    Error(map.Mark(), path.empty() ? kTopLevel : path,
          fmt::format("expected a mapping, got {}", DescribeNode(map)));
    return;
  }
  std::map<std::string, int, std::less<>> seen;  // key → 1-based line of first use
  for (const auto& entry : map) {                // `entry` is a temporary kept alive by the loop
    const YAML::Node& key = entry.first;
    if (!key.IsScalar()) {
      Error(key.Mark(), path.empty() ? kTopLevel : path, "keys must be plain names");
      continue;
    }
    const std::string& name = key.Scalar();
    const std::string key_path = Join(path, name);
    if (auto [where, inserted] = seen.emplace(name, key.Mark().line + 1); !inserted) {
      Error(key.Mark(), key_path, fmt::format("duplicate key (first at line {})", where->second));
      continue;
    }
    bool is_known = false;
    std::string expected;
    for (const auto& group : known) {
      for (std::string_view k : group) {
        if (k == name) is_known = true;
        if (!expected.empty()) expected += ", ";
        expected += k;
      }
    }
    if (!is_known) {
      const bool belongs_to_line =
          std::find(per_line.begin(), per_line.end(), name) != per_line.end();
      Error(key.Mark(), key_path,
            belongs_to_line ? std::string("is set per line, not in defaults")
                            : fmt::format("unknown key (expected one of: {})", expected));
      continue;
    }
    const YAML::Node& value = entry.second;
    // A key with nothing after it gives a null node; point at the key then.
    handle(name, value, key_path, value.IsNull() ? key.Mark() : value.Mark());
  }
}

bool Loader::ReadString(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
                        std::string* out) {
  if (node.IsNull()) {
    out->clear();
    return true;
  }
  if (!node.IsScalar()) {
    Error(mark, path, fmt::format("expected a string, got {}", DescribeNode(node)));
    return false;
  }
  *out = node.Scalar();
  return true;
}

bool Loader::ReadNonEmptyString(const YAML::Node& node, const YAML::Mark& mark,
                                std::string_view path, std::string* out) {
  std::string value;
  if (!ReadString(node, mark, path, &value)) return false;
  if (value.empty()) {
    Error(mark, path, "must not be empty");
    return false;
  }
  *out = std::move(value);
  return true;
}

bool Loader::ReadBool(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
                      bool* out) {
  if (IsPlainScalar(node)) {
    const std::string& s = node.Scalar();
    if (s == "true" || s == "True" || s == "TRUE") {
      *out = true;
      return true;
    }
    if (s == "false" || s == "False" || s == "FALSE") {
      *out = false;
      return true;
    }
  }
  Error(mark, path, fmt::format("expected true or false, got {}", DescribeNode(node)));
  return false;
}

template <class Int>
bool Loader::ReadInt(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
                     std::int64_t low, std::int64_t high, Int* out) {
  std::optional<std::int64_t> value;
  if (IsPlainScalar(node)) value = ParseInteger(node.Scalar());
  if (!value) {
    Error(mark, path, fmt::format("expected a whole number, got {}", DescribeNode(node)));
    return false;
  }
  if (*value < low || *value > high) {
    Error(mark, path, fmt::format("must be between {} and {}, got {}", low, high, node.Scalar()));
    return false;
  }
  *out = static_cast<Int>(*value);
  return true;
}

bool Loader::ReadDouble(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
                        const Range& range, double* out) {
  std::optional<double> value;
  if (IsPlainScalar(node)) value = ParseNumber(node.Scalar());
  if (!value) {
    Error(mark, path, fmt::format("expected a number, got {}", DescribeNode(node)));
    return false;
  }
  if (!range.Contains(*value)) {
    Error(mark, path, fmt::format("{}, got {}", DescribeRange(range), node.Scalar()));
    return false;
  }
  *out = *value;
  return true;
}

void Loader::LoadListen(const YAML::Node& node, ListenSettings* out) {
  ForEachKey(node, "listen", {kListenKeys}, {},
             [&](std::string_view key, const YAML::Node& value, const std::string& path,
                 const YAML::Mark& mark) {
               if (key == "address") ReadNonEmptyString(value, mark, path, &out->address);
               if (key == "port") ReadInt(value, mark, path, 1, 65535, &out->port);
               if (key == "max_connections")
                 ReadInt(value, mark, path, 1, 100'000, &out->max_connections);
             });
}

void Loader::LoadStorage(const YAML::Node& node, StorageSettings* out) {
  ForEachKey(node, "storage", {kStorageKeys}, {},
             [&](std::string_view key, const YAML::Node& value, const std::string& path,
                 const YAML::Mark& mark) {
               if (key == "database") ReadNonEmptyString(value, mark, path, &out->database);
               if (key == "raw_samples") ReadBool(value, mark, path, &out->raw_samples);
               if (key == "raw_retention_days") {
                 ReadInt(value, mark, path, 0, 36'500, &out->raw_retention_days);
               }
               if (key == "flush_interval_ms") {
                 ReadInt(value, mark, path, 1, 60'000, &out->flush_interval_ms);
               }
               if (key == "batch_max_rows") {
                 ReadInt(value, mark, path, 1, 1'000'000, &out->batch_max_rows);
               }
               if (key == "checkpoint_interval_s") {
                 ReadInt(value, mark, path, 0, 86'400, &out->checkpoint_interval_s);
               }
             });
}

void Loader::LoadLog(const YAML::Node& node, LogSettings* out) {
  ForEachKey(node, "log", {kLogKeys}, {},
             [&](std::string_view key, const YAML::Node& value, const std::string& path,
                 const YAML::Mark& mark) {
               if (key == "file") ReadString(value, mark, path, &out->file);
               if (key == "level") {
                 std::string level;
                 if (!ReadString(value, mark, path, &level)) return;
                 if (level == "trace" || level == "debug" || level == "info" || level == "warn" ||
                     level == "error") {
                   out->level = level;
                 } else {
                   Error(mark, path,
                         fmt::format("must be one of trace, debug, info, warn, error; got {}",
                                     DescribeNode(value)));
                 }
               }
             });
}

bool Loader::LoadDetectorKey(std::string_view key, const YAML::Node& value, const YAML::Mark& mark,
                             std::string_view path, LineSettings* out) {
  if (key == "false_alarms_per_day") {
    ReadDouble(value, mark, path, Above(0.0), &out->false_alarms_per_day);
  } else if (key == "pack_rate_per_min") {
    ReadDouble(value, mark, path, Above(0.0), &out->pack_rate_per_min);
  } else if (key == "min_shift_sigma") {
    ReadDouble(value, mark, path, AboveAtMost(0.0, 10.0), &out->min_shift_sigma);
  } else if (key == "baseline_packs") {
    ReadInt(value, mark, path, 30, 100'000, &out->baseline_packs);
  } else if (key == "silence_s") {
    std::int64_t seconds = 0;
    if (ReadInt(value, mark, path, 1, 86'400, &seconds)) out->silence_ms = seconds * 1000;
  } else if (key == "gross_low_ratio") {
    ReadDouble(value, mark, path, AtLeastBelow(0.0, 1.0), &out->gross_low_ratio);
  } else if (key == "gross_high_ratio") {
    ReadDouble(value, mark, path, AboveAtMost(1.0, 10.0), &out->gross_high_ratio);
  } else if (key == "detection") {
    LoadDetection(value, path, out);
  } else {
    return false;
  }
  return true;
}

void Loader::LoadDetection(const YAML::Node& node, std::string_view path, LineSettings* out) {
  ForEachKey(node, path, {kDetectionKeys}, {},
             [&](std::string_view key, const YAML::Node& value, std::string_view key_path,
                 const YAML::Mark& mark) {
               if (key == "drift_lambda") {
                 ReadDouble(value, mark, key_path, AboveAtMost(0.0, 1.0), &out->drift_lambda);
               } else if (key == "head_shift_sigma") {
                 ReadDouble(value, mark, key_path, AboveAtMost(0.0, 20.0), &out->head_shift_sigma);
               } else if (key == "spread_ratio") {
                 ReadDouble(value, mark, key_path, AboveAtMost(1.0, 10.0), &out->spread_ratio);
               } else if (key == "min_cycle_sigma") {
                 ReadDouble(value, mark, key_path, AboveAtMost(0.0, 20.0), &out->min_cycle_sigma);
               } else if (key == "cycle_window_packs") {
                 ReadInt(value, mark, key_path, 64, 8192, &out->cycle_window_packs);
               } else if (key == "cycle_every_packs") {
                 ReadInt(value, mark, key_path, 1, 8192, &out->cycle_every_packs);
               } else if (key == "run_rules") {
                 ReadBool(value, mark, key_path, &out->run_rules);
               } else if (key == "subgroup_packs") {
                 ReadInt(value, mark, key_path, 0, 256, &out->subgroup_packs);
               } else if (key == "run_one_side_count") {
                 ReadInt(value, mark, key_path, 0, 1000, &out->run_one_side_count);
               } else if (key == "run_trend_count") {
                 ReadInt(value, mark, key_path, 0, 1000, &out->run_trend_count);
               } else if (key == "run_sawtooth_count") {
                 ReadInt(value, mark, key_path, 0, 1000, &out->run_sawtooth_count);
               } else if (key == "run_hugging_count") {
                 ReadInt(value, mark, key_path, 0, 1000, &out->run_hugging_count);
               } else if (key == "run_avoiding_count") {
                 ReadInt(value, mark, key_path, 0, 1000, &out->run_avoiding_count);
               } else if (key == "stuck_packs") {
                 ReadInt(value, mark, key_path, 2, 100'000, &out->stuck_packs);
               } else if (key == "outlier_burst_packs") {
                 ReadInt(value, mark, key_path, 2, 100'000, &out->outlier_burst_packs);
               } else if (key == "settling_alarm_packs") {
                 ReadInt(value, mark, key_path, 30, 10'000'000, &out->settling_alarm_packs);
               } else if (key == "baseline_block_packs") {
                 ReadInt(value, mark, key_path, 50, 100'000, &out->baseline_block_packs);
               }
             });
}

void Loader::LoadDefaults(const YAML::Node& node, LineSettings* out) {
  rules_given_.reset();
  ForEachKey(node, "defaults", {kDetectorKeys, kComplianceKeys}, kLineOnlyKeys,
             [&](std::string_view key, const YAML::Node& value, const std::string& path,
                 const YAML::Mark& mark) {
               if (!LoadDetectorKey(key, value, mark, path, out)) {
                 LoadComplianceKey(key, value, mark, path, out);
               }
             });
  defaults_rules_ = rules_given_;
}

void Loader::LoadLines(const YAML::Node& node, PlantSettings* plant) {
  if (node.IsNull()) return;
  if (!node.IsSequence()) {
    Error(node.Mark(), "lines", fmt::format("expected a list, got {}", DescribeNode(node)));
    return;
  }
  std::map<std::string, int, std::less<>> first_line;  // id → 1-based line where first given
  for (std::size_t i = 0; i < node.size(); ++i) {
    const YAML::Node item = node[i];
    const std::string item_path = fmt::format("lines[{}]", i);
    if (!item.IsMap()) {
      Error(item.Mark(), item_path, fmt::format("expected a mapping, got {}", DescribeNode(item)));
      continue;
    }
    LineSettings settings = plant->defaults;
    std::string id;
    bool id_ok = false;
    bool has_id = false;
    rules_given_.reset();
    ForEachKey(
        item, item_path, {kLineOnlyKeys, kDetectorKeys, kComplianceKeys}, {},
        [&](std::string_view key, const YAML::Node& value, const std::string& path,
            const YAML::Mark& mark) {
          if (key == "id") {
            has_id = true;
            if (!ReadString(value, mark, path, &id)) return;
            if (id.empty()) {
              Error(mark, path, "must not be empty");
            } else if (!IsNativeLineId(id)) {
              Error(mark, path,
                    fmt::format("\"{}\" is not a line id (1 to 64 characters of A-Z, a-z, "
                                "0-9, '_', '.', '-')",
                                id));
            } else if (auto [where, inserted] = first_line.emplace(id, mark.line + 1); !inserted) {
              Error(mark, path,
                    fmt::format("duplicate line id \"{}\" (first at line {})", id, where->second));
            } else {
              id_ok = true;
            }
          } else if (key == "product") {
            ReadString(value, mark, path, &settings.product);
          } else if (key == "nominal_g") {
            double grams = 0.0;
            if (ReadDouble(value, mark, path, Closed(0.1, 100'000.0), &grams)) {
              settings.nominal_g = grams;
            }
          } else if (key == "target_g") {
            double grams = 0.0;
            if (ReadDouble(value, mark, path, Closed(0.1, 100'000.0), &grams)) {
              settings.target_g = grams;
            }
          } else if (key == "heads") {
            ReadInt(value, mark, path, 0, 256, &settings.heads);
          } else if (!LoadDetectorKey(key, value, mark, path, &settings)) {
            LoadComplianceKey(key, value, mark, path, &settings);
          }
        });
    if (!has_id) Error(item.Mark(), item_path, "missing required key \"id\"");
    if (id_ok) pending_lines_.push_back({id, rules_given_, item.Mark(), item_path});
    if (id_ok) plant->lines.emplace(id, std::move(settings));
  }
}

void Loader::LoadHttp(const YAML::Node& node, HttpSettings* out) {
  out->enabled = true;  // giving the block turns the server on
  ForEachKey(node, "http", {kHttpKeys}, {},
             [&](std::string_view key, const YAML::Node& value, const std::string& path,
                 const YAML::Mark& mark) {
               if (key == "enabled") ReadBool(value, mark, path, &out->enabled);
               if (key == "address") ReadNonEmptyString(value, mark, path, &out->address);
               if (key == "port") ReadInt(value, mark, path, 0, 65535, &out->port);
               if (key == "token") {
                 std::string token;
                 if (!ReadString(value, mark, path, &token)) return;
                 if (!token.empty() && token.size() < 16) {
                   Error(mark, path, "must be empty or at least 16 characters long");
                   return;
                 }
                 out->token = std::move(token);
               }
             });
}

void Loader::Load(const YAML::Node& root, Config* config) {
  // Copies, not yaml-cpp assignment (which would rewrite the node assigned to).
  std::optional<YAML::Node> listen, storage, log, defaults, lines, max_lines, sources;
  std::optional<YAML::Node> alerting;  // io/alerting_loader.h
  std::optional<YAML::Node> http;      // daemon/http_server.h
  YAML::Mark max_lines_mark;
  ForEachKey(root, "", {kTopKeys}, {},
             [&](std::string_view key, const YAML::Node& value, const std::string&,
                 const YAML::Mark& mark) {
               if (key == "listen") listen.emplace(value);
               if (key == "storage") storage.emplace(value);
               if (key == "log") log.emplace(value);
               if (key == "defaults") defaults.emplace(value);
               if (key == "lines") lines.emplace(value);
               if (key == "sources") sources.emplace(value);
               if (key == "alerting") alerting.emplace(value);
               if (key == "http") http.emplace(value);
               if (key == "max_lines") {
                 max_lines.emplace(value);
                 max_lines_mark = mark;
               }
             });
  if (listen) LoadListen(*listen, &config->listen);
  if (sources) {  // io/source_config_loader.h; with sources and no listen block, no default
                  // listener
    std::vector<ConfigProblem> found;
    LoadSourcesNode(*sources, name_, &config->sources, &found);
    for (ConfigProblem& p : found) errors_.push_back({p.line, p.column, std::move(p.text)});
    if (!listen) config->listen.enabled = false;
  }
  if (storage) LoadStorage(*storage, &config->storage);
  if (log) LoadLog(*log, &config->log);
  if (http) LoadHttp(*http, &config->http);
  // Defaults first, wherever they stand in the file: every line starts from them.
  if (defaults) LoadDefaults(*defaults, &config->plant.defaults);
  bool max_lines_ok = true;
  if (max_lines) {
    max_lines_ok =
        ReadInt(*max_lines, max_lines_mark, "max_lines", 1, 1'000'000, &config->plant.max_lines);
  }
  if (lines) {
    LoadLines(*lines, &config->plant);
    if (max_lines_ok && lines->IsSequence() && lines->size() > config->plant.max_lines) {
      Error(lines->Mark(), "lines",
            fmt::format("lists {} lines, more than max_lines ({})", lines->size(),
                        config->plant.max_lines));
    }
  }
  ResolveRules(config);
  if (alerting) {
    LoadAlerting(
        *alerting, name_,
        [&](const YAML::Mark& m, std::string_view p, std::string_view r) { Error(m, p, r); },
        &config->alerting);
  }
}

// --- Net-content compliance keys (rules, lots, compliance, safe_target). ---

bool Loader::LoadComplianceKey(std::string_view key, const YAML::Node& value,
                               const YAML::Mark& mark, std::string_view path, LineSettings* out) {
  if (key == "rules") {
    if (ReadNonEmptyString(value, mark, path, &out->rules)) {
      rules_given_ = RulesKey{mark, std::string(path)};
    }
  } else if (key == "rules_allow_unconfirmed") {
    ReadBool(value, mark, path, &out->rules_allow_unconfirmed);
  } else if (key == "cost_per_kg") {
    ReadDouble(value, mark, path, Closed(0.0, 1e6), &out->cost_per_kg);
  } else if (key == "rejects_in_lot") {
    ReadBool(value, mark, path, &out->rejects_in_lot);
  } else if (key == "lots") {
    LoadLots(value, mark, path, &out->lots);
  } else if (key == "compliance") {
    LoadComplianceAlert(value, path, out);
  } else if (key == "safe_target") {
    LoadSafeTarget(value, path, &out->safe_target);
  } else {
    return false;
  }
  return true;
}

void Loader::LoadLots(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
                      comply::LotPolicy* out) {
  comply::LotPolicy policy = *out;
  bool boundary_given = false;
  const std::size_t errors_before = errors_.size();
  ForEachKey(node, path, {kLotKeys}, {},
             [&](std::string_view key, const YAML::Node& value, const std::string& key_path,
                 const YAML::Mark& key_mark) {
               if (key == "by") {
                 std::string by;
                 if (!ReadString(value, key_mark, key_path, &by)) return;
                 boundary_given = true;
                 if (by == "count") {
                   policy.boundary = comply::LotBoundary::kCount;
                 } else if (by == "hour") {
                   policy.boundary = comply::LotBoundary::kHour;
                 } else if (by == "shifts") {
                   policy.boundary = comply::LotBoundary::kShifts;
                 } else if (by == "manual") {
                   policy.boundary = comply::LotBoundary::kManual;
                 } else {
                   Error(key_mark, key_path,
                         fmt::format("must be one of count, hour, shifts, manual; got {}",
                                     DescribeNode(value)));
                 }
               } else if (key == "packs_per_lot") {
                 ReadInt(value, key_mark, key_path, 1, 100'000'000, &policy.packs_per_lot);
               } else if (key == "utc_offset_minutes") {
                 ReadInt(value, key_mark, key_path, -16 * 60, 16 * 60, &policy.utc_offset_minutes);
               } else if (key == "shifts") {
                 if (!value.IsSequence() || value.size() == 0) {
                   Error(key_mark, key_path,
                         fmt::format("expected a list of shift start times like \"06:00\", got {}",
                                     DescribeNode(value)));
                   return;
                 }
                 std::vector<int> starts;
                 for (std::size_t i = 0; i < value.size(); ++i) {
                   const YAML::Node item = value[i];
                   const std::string item_path = fmt::format("{}[{}]", key_path, i);
                   // "HH:MM" (24 h clock, local time).
                   std::optional<int> minutes;
                   if (item.IsScalar()) {
                     const std::string& text = item.Scalar();
                     const auto colon = text.find(':');
                     if (colon != std::string::npos && colon >= 1 && colon <= 2 &&
                         text.size() == colon + 3) {
                       const auto h = ParseInteger(std::string_view(text).substr(0, colon));
                       const auto m = ParseInteger(std::string_view(text).substr(colon + 1));
                       if (h && m && *h >= 0 && *h <= 23 && *m >= 0 && *m <= 59 &&
                           text[colon + 1] != '+' && text[0] != '+') {
                         minutes = static_cast<int>(*h * 60 + *m);
                       }
                     }
                   }
                   if (!minutes) {
                     Error(item.Mark(), item_path,
                           fmt::format("expected a time of day like \"06:00\", got {}",
                                       DescribeNode(item)));
                     return;
                   }
                   if (!starts.empty() && *minutes <= starts.back()) {
                     Error(item.Mark(), item_path,
                           "shift starts must be in increasing order within one day");
                     return;
                   }
                   starts.push_back(*minutes);
                 }
                 policy.shift_start_minutes = std::move(starts);
               }
             });
  if (errors_.size() != errors_before) return;
  if (boundary_given || node.IsMap()) {
    if (Status s = comply::ValidateLotPolicy(policy); !s.ok()) {
      Error(mark, path, s.message());
      return;
    }
  }
  *out = std::move(policy);
}

void Loader::LoadComplianceAlert(const YAML::Node& node, std::string_view path, LineSettings* out) {
  comply::ComplianceAlertSettings& a = out->compliance;
  ForEachKey(node, path, {kComplianceAlertKeys}, {},
             [&](std::string_view key, const YAML::Node& value, const std::string& key_path,
                 const YAML::Mark& mark) {
               const Range probability = Range{0.0, 1.0, true, true, true};
               if (key == "min_packs") ReadInt(value, mark, key_path, 2, 10'000'000, &a.min_packs);
               if (key == "mean_warn_probability") {
                 ReadDouble(value, mark, key_path, probability, &a.mean_warn_probability);
               }
               if (key == "mean_alarm_probability") {
                 ReadDouble(value, mark, key_path, probability, &a.mean_alarm_probability);
               }
               if (key == "t1_warn_share_of_limit") {
                 ReadDouble(value, mark, key_path, AboveAtMost(0.0, 10.0),
                            &a.t1_warn_share_of_limit);
               }
               if (key == "t1_share_min_packs") {
                 ReadInt(value, mark, key_path, 2, 10'000'000, &a.t1_share_min_packs);
               }
               if (key == "t1_warn_probability") {
                 ReadDouble(value, mark, key_path, probability, &a.t1_warn_probability);
               }
               if (key == "t1_alarm_probability") {
                 ReadDouble(value, mark, key_path, probability, &a.t1_alarm_probability);
               }
               if (key == "t2_alarm") ReadBool(value, mark, key_path, &a.t2_alarm);
               if (key == "hold_off_packs") {
                 ReadInt(value, mark, key_path, 0, 10'000'000, &out->compliance_hold_off_packs);
               }
             });
  if (node.IsMap() && (a.mean_warn_probability > a.mean_alarm_probability ||
                       a.t1_warn_probability > a.t1_alarm_probability)) {
    Error(node.Mark(), path,
          "warning probabilities must not be above the alarm probabilities "
          "(mean_warn_probability <= mean_alarm_probability, t1_warn_probability <= "
          "t1_alarm_probability)");
  }
}

void Loader::LoadSafeTarget(const YAML::Node& node, std::string_view path,
                            comply::SafeTargetSettings* out) {
  ForEachKey(node, path, {kSafeTargetKeys}, {},
             [&](std::string_view key, const YAML::Node& value, const std::string& key_path,
                 const YAML::Mark& mark) {
               // Per pack P(below T2): between 1e-9 and 0.1.
               if (key == "t2_risk") {
                 ReadDouble(value, mark, key_path, Closed(1e-9, 0.1), &out->tail_probability);
               }
               if (key == "confidence") {
                 ReadDouble(value, mark, key_path, AtLeastBelow(0.5, 1.0), &out->mean_confidence);
               }
               if (key == "t1_share_of_limit") {
                 ReadDouble(value, mark, key_path, AboveAtMost(0.0, 1.0), &out->t1_share_of_limit);
               }
               if (key == "mean_margin_g") {
                 ReadDouble(value, mark, key_path, Closed(0.0, 1000.0), &out->mean_margin_g);
               }
               if (key == "hours_per_year") {
                 ReadDouble(value, mark, key_path, Closed(0.0, 8784.0), &out->hours_per_year);
               }
             });
}

void Loader::ResolveRules(Config* config) {
  const std::string base_dir = std::filesystem::path(name_).parent_path().string();
  PlantSettings& plant = config->plant;
  bool defaults_failed = false;
  if (defaults_rules_) {
    // Checked even without a nominal, so a typo shows before any line uses it.
    LineSettings probe = plant.defaults;
    probe.nominal_g.reset();
    if (Status s = ResolveLineRules(&probe, base_dir, &plant); !s.ok()) {
      Error(defaults_rules_->mark, defaults_rules_->path, s.message());
      defaults_failed = true;
    } else {
      plant.defaults.rules = probe.rules;
    }
  }
  for (const PendingLine& pending : pending_lines_) {
    auto it = plant.lines.find(pending.id);
    if (it == plant.lines.end()) continue;
    LineSettings& line = it->second;
    if (!pending.rules && (defaults_failed || !line.nominal_g)) continue;
    if (Status s = ResolveLineRules(&line, base_dir, &plant); !s.ok()) {
      if (pending.rules) {
        Error(pending.rules->mark, pending.rules->path, s.message());
      } else {
        Error(pending.mark, pending.path, s.message());
      }
    }
  }
}

Status Finish(const std::vector<std::string>& errors) {
  if (errors.empty()) return Status::Ok();
  if (errors.size() == 1) return Status::Error(errors.front());
  const std::size_t more = errors.size() - 1;
  return Status::Error(
      fmt::format("{} (and {} more error{})", errors.front(), more, more == 1 ? "" : "s"));
}

}  // namespace

Status LoadConfigText(const std::string& text, const std::string& name, Config* out,
                      std::vector<std::string>* errors) {
  std::vector<std::string> local_errors;
  std::vector<std::string>& errs = errors != nullptr ? *errors : local_errors;
  errs.clear();
  Config config;
  config.path = name;
  try {
    const YAML::Node root = YAML::Load(text);
    Loader loader(name);
    loader.Load(root, &config);
    loader.TakeErrors(&errs);
  } catch (const YAML::Exception& e) {
    // Syntax errors (ParserException) carry the position; nothing else from
    // yaml-cpp is expected here, but it is reported the same way.
    const bool syntax = dynamic_cast<const YAML::ParserException*>(&e) != nullptr;
    const int line = e.mark.is_null() ? 0 : e.mark.line + 1;
    const int column = e.mark.is_null() ? 0 : e.mark.column + 1;
    errs.push_back(fmt::format("{}:{}:{}: {}: {}", name, line, column,
                               syntax ? "YAML syntax error" : "YAML error", e.msg));
  } catch (const std::exception& e) {
    errs.push_back(fmt::format("{}: cannot read configuration: {}", name, e.what()));
  }
  if (!errs.empty()) return Finish(errs);
  *out = std::move(config);
  return Status::Ok();
}

Status LoadConfigFile(const std::string& path, Config* out, std::vector<std::string>* errors) {
  std::FILE* file = std::fopen(path.c_str(), "rb");
  std::string text;
  int error_number = 0;
  if (file == nullptr) {
    error_number = errno;
  } else {
    char buffer[8192];
    std::size_t n;
    errno = 0;
    while ((n = std::fread(buffer, 1, sizeof buffer, file)) > 0) text.append(buffer, n);
    if (std::ferror(file)) error_number = errno != 0 ? errno : EIO;
    std::fclose(file);
  }
  if (file == nullptr || error_number != 0) {
    std::string message =
        fmt::format("{}: cannot read configuration file: {}", path, std::strerror(error_number));
    if (errors != nullptr) *errors = {message};
    return Status::Error(std::move(message));
  }
  return LoadConfigText(text, path, out, errors);
}

}  // namespace heft
