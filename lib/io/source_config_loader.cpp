// source_config_loader.cpp — see source_config_loader.h. Scalars are read with
// std::from_chars, as in config_loader.cpp (no octal "010", no locale).
#include "io/source_config_loader.h"

#include <algorithm>
#include <array>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <map>
#include <memory>
#include <optional>
#include <set>
#include <string_view>
#include <system_error>
#include <utility>

#include <fmt/format.h>

#include "core/record/native_record.h"
#include "core/record/record_format.h"
#include "io/peer_allow_list.h"
#include "io/record_format_factory.h"

namespace heft {
namespace {

using std::literals::string_view_literals::operator""sv;

constexpr std::array kCommonKeys = {"name"sv, "type"sv, "line_id"sv, "max_record_bytes"sv,
                                    "format"sv};
constexpr std::array kListenKeys = {"address"sv, "port"sv, "allow"sv, "max_connections"sv};
constexpr std::array kConnectKeys = {
    "host"sv,         "port"sv,         "connect_timeout_ms"sv, "retry_initial_ms"sv,
    "retry_max_ms"sv, "max_attempts"sv, "keepalive_s"sv};
constexpr std::array kSerialKeys = {"device"sv,           "baud"sv,        "data_bits"sv,
                                    "parity"sv,           "stop_bits"sv,   "flow_control"sv,
                                    "retry_initial_ms"sv, "retry_max_ms"sv};
constexpr std::array kFollowKeys = {"path"sv, "poll_ms"sv, "start_at"sv};
constexpr std::array kFormatKeys = {
    "type"sv,           "delimiter"sv,       "decimal_comma"sv, "header"sv, "fields"sv,
    "pair_separator"sv, "value_separator"sv, "pattern"sv,       "unit"sv,   "scale"sv,
    "offset_g"sv,       "time_format"sv,     "status"sv};
constexpr std::array kStatusKeys = {"ok"sv, "rejected"sv, "error"sv, "other"sv};
// Standard rates termios knows (Linux); a serial port takes no others.
constexpr std::array kBauds = {50,    75,    110,    134,    150,    200,   300,
                               600,   1200,  1800,   2400,   4800,   9600,  19200,
                               38400, 57600, 115200, 230400, 460800, 921600};

struct TypeInfo {
  std::string_view name;
  SourceType type;
};
constexpr std::array kTypes = {
    TypeInfo{"tcp-listen", SourceType::kTcpListen},
    TypeInfo{"tcp-connect", SourceType::kTcpConnect}, TypeInfo{"serial", SourceType::kSerial},
    TypeInfo{"file-follow", SourceType::kFileFollow}, TypeInfo{"stdin", SourceType::kStdin}};

std::string Describe(const YAML::Node& node) {
  switch (node.Type()) {
    case YAML::NodeType::Map:
      return "a mapping";
    case YAML::NodeType::Sequence:
      return "a list";
    case YAML::NodeType::Scalar:
      if (node.Tag() == "!") return fmt::format("the quoted string \"{}\"", node.Scalar());
      return fmt::format("\"{}\"", node.Scalar());
    default:
      return "nothing";
  }
}

bool IsPlain(const YAML::Node& node) { return node.IsScalar() && node.Tag() != "!"; }

class SourceReader {
 public:
  SourceReader(const std::string& file, std::vector<ConfigProblem>* problems)
      : file_(file), problems_(problems) {}

  void Error(const YAML::Mark& mark, std::string_view path, std::string_view reason) {
    const int line = mark.is_null() ? 0 : mark.line + 1;
    const int column = mark.is_null() ? 0 : mark.column + 1;
    problems_->push_back(
        {line, column, fmt::format("{}:{}:{}: {}: {}", file_, line, column, path, reason)});
  }

  // Calls handle(key, value, path, mark) for every key; refuses non-maps,
  // repeated keys and keys not in `known` (saying which are).
  template <class Handler>
  void Keys(const YAML::Node& map, std::string_view path,
            const std::vector<std::string_view>& known, std::string_view refused_why,
            Handler&& handle) {
    if (map.IsNull()) return;
    if (!map.IsMap()) {
      Error(map.Mark(), path, fmt::format("expected a mapping, got {}", Describe(map)));
      return;
    }
    std::set<std::string, std::less<>> seen;
    for (const auto& entry : map) {
      const YAML::Node& key = entry.first;
      if (!key.IsScalar()) {
        Error(key.Mark(), path, "keys must be plain names");
        continue;
      }
      const std::string name = key.Scalar();
      const std::string key_path = fmt::format("{}.{}", path, name);
      if (!seen.insert(name).second) {
        Error(key.Mark(), key_path, "duplicate key");
        continue;
      }
      if (std::find(known.begin(), known.end(), name) == known.end()) {
        std::string expected;
        for (std::string_view k : known) {
          if (!expected.empty()) expected += ", ";
          expected += k;
        }
        Error(key.Mark(), key_path,
              fmt::format("unknown key{} (expected one of: {})", refused_why, expected));
        continue;
      }
      const YAML::Node& value = entry.second;
      handle(std::string_view(name), value, key_path, value.IsNull() ? key.Mark() : value.Mark());
    }
  }

  bool String(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
              std::string* out, bool allow_empty = false) {
    if (!node.IsScalar() && !node.IsNull()) {
      Error(mark, path, fmt::format("expected a string, got {}", Describe(node)));
      return false;
    }
    std::string value = node.IsNull() ? std::string() : node.Scalar();
    if (value.empty() && !allow_empty) {
      Error(mark, path, "must not be empty");
      return false;
    }
    *out = std::move(value);
    return true;
  }

  bool Bool(const YAML::Node& node, const YAML::Mark& mark, std::string_view path, bool* out) {
    if (IsPlain(node)) {
      const std::string& s = node.Scalar();
      if (s == "true" || s == "True" || s == "TRUE") return *out = true, true;
      if (s == "false" || s == "False" || s == "FALSE") return *out = false, true;
    }
    Error(mark, path, fmt::format("expected true or false, got {}", Describe(node)));
    return false;
  }

  bool Int(const YAML::Node& node, const YAML::Mark& mark, std::string_view path, std::int64_t low,
           std::int64_t high, std::int64_t* out) {
    std::optional<std::int64_t> value;
    if (IsPlain(node)) {
      std::string_view s = node.Scalar();
      if (!s.empty() && s.front() == '+') s.remove_prefix(1);
      std::int64_t v = 0;
      const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
      if (!s.empty() && ec == std::errc() && end == s.data() + s.size()) value = v;
    }
    if (!value) {
      Error(mark, path, fmt::format("expected a whole number, got {}", Describe(node)));
      return false;
    }
    if (*value < low || *value > high) {
      Error(mark, path, fmt::format("must be between {} and {}, got {}", low, high, *value));
      return false;
    }
    *out = *value;
    return true;
  }

  template <class T>
  bool IntTo(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
             std::int64_t low, std::int64_t high, T* out) {
    std::int64_t v = 0;
    if (!Int(node, mark, path, low, high, &v)) return false;
    *out = static_cast<T>(v);
    return true;
  }

  bool Number(const YAML::Node& node, const YAML::Mark& mark, std::string_view path, double* out) {
    std::optional<double> value;
    if (IsPlain(node)) {
      std::string_view s = node.Scalar();
      if (!s.empty() && s.front() == '+') s.remove_prefix(1);
      const std::string_view digits = !s.empty() && s.front() == '-' ? s.substr(1) : s;
      double v = 0.0;
      if (!digits.empty() &&
          (digits.front() == '.' || (digits.front() >= '0' && digits.front() <= '9'))) {
        const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
        if (ec == std::errc() && end == s.data() + s.size() && std::isfinite(v)) value = v;
      }
    }
    if (!value) {
      Error(mark, path, fmt::format("expected a number, got {}", Describe(node)));
      return false;
    }
    *out = *value;
    return true;
  }

  // One of `choices` (as written in the config).
  template <std::size_t N>
  std::optional<std::size_t> Choice(const YAML::Node& node, const YAML::Mark& mark,
                                    std::string_view path,
                                    const std::array<std::string_view, N>& choices) {
    if (node.IsScalar()) {
      for (std::size_t i = 0; i < N; ++i) {
        if (node.Scalar() == choices[i]) return i;
      }
    }
    std::string list;
    for (std::size_t i = 0; i < N; ++i) {
      list += (i == 0 ? "" : (i + 1 == N ? " or " : ", "));
      list += choices[i];
    }
    Error(mark, path, fmt::format("must be {}; got {}", list, Describe(node)));
    return std::nullopt;
  }

  // A single character: "," ";" "\t" (YAML escapes) or "tab"/"space".
  bool Char(const YAML::Node& node, const YAML::Mark& mark, std::string_view path, char* out) {
    if (node.IsScalar()) {
      const std::string& s = node.Scalar();
      if (s == "tab") return *out = '\t', true;
      if (s == "space") return *out = ' ', true;
      if (s.size() == 1 && static_cast<unsigned char>(s[0]) >= 0x20 &&
          static_cast<unsigned char>(s[0]) < 0x7F) {
        return *out = s[0], true;
      }
      if (s == "\t") return *out = '\t', true;
    }
    Error(mark, path,
          fmt::format("expected one character (or tab, space), got {}", Describe(node)));
    return false;
  }

  bool StringList(const YAML::Node& node, const YAML::Mark& mark, std::string_view path,
                  std::vector<std::string>* out) {
    out->clear();
    if (node.IsNull()) return true;
    if (node.IsScalar()) {  // one value without list brackets
      out->push_back(node.Scalar());
      return true;
    }
    if (!node.IsSequence()) {
      Error(mark, path, fmt::format("expected a list of strings, got {}", Describe(node)));
      return false;
    }
    bool ok = true;
    for (std::size_t i = 0; i < node.size(); ++i) {
      const YAML::Node item = node[i];
      if (!item.IsScalar()) {
        Error(item.Mark(), fmt::format("{}[{}]", path, i),
              fmt::format("expected a string, got {}", Describe(item)));
        ok = false;
        continue;
      }
      out->push_back(item.Scalar());
    }
    return ok;
  }

  void LoadFormat(const YAML::Node& node, const std::string& path, FormatSettings* f);
  void LoadFields(const YAML::Node& node, const std::string& path, FormatSettings* f);
  void LoadStatus(const YAML::Node& node, const std::string& path, StatusMapping* m);
  void LoadSource(const YAML::Node& item, const std::string& path, SourceSettings* s, bool* ok);

 private:
  const std::string& file_;
  std::vector<ConfigProblem>* problems_;
};

void SourceReader::LoadFields(const YAML::Node& node, const std::string& path, FormatSettings* f) {
  std::vector<std::string_view> names;
  for (std::size_t i = 0; i < kRecordFieldCount; ++i) {
    names.push_back(RecordFieldName(static_cast<RecordField>(i)));
  }
  Keys(node, path, names, "",
       [&](std::string_view key, const YAML::Node& value, const std::string& key_path,
           const YAML::Mark& mark) {
         FieldRef& ref = f->field(*RecordFieldFromName(key));
         ref = FieldRef{};
         if (IsPlain(value) && !value.Scalar().empty() && value.Scalar()[0] >= '0' &&
             value.Scalar()[0] <= '9') {
           int column = 0;  // a column number, counted from 1
           if (IntTo(value, mark, key_path, 1, 1000, &column)) ref.column = column - 1;
           return;
         }
         String(value, mark, key_path, &ref.name);
       });
}

void SourceReader::LoadStatus(const YAML::Node& node, const std::string& path, StatusMapping* m) {
  const std::vector<std::string_view> known(kStatusKeys.begin(), kStatusKeys.end());
  Keys(node, path, known, "",
       [&](std::string_view key, const YAML::Node& value, const std::string& key_path,
           const YAML::Mark& mark) {
         if (key == "ok") StringList(value, mark, key_path, &m->ok);
         if (key == "rejected") StringList(value, mark, key_path, &m->rejected);
         if (key == "error") StringList(value, mark, key_path, &m->error);
         if (key == "other") {
           static constexpr std::array<std::string_view, 4> kOther = {"refuse", "ok", "rejected",
                                                                      "error"};
           if (const auto i = Choice(value, mark, key_path, kOther)) {
             m->other = *i == 0 ? std::nullopt
                                : std::optional<PackStatus>(*i == 1   ? PackStatus::kOk
                                                            : *i == 2 ? PackStatus::kRejected
                                                                      : PackStatus::kError);
           }
         }
       });
}

void SourceReader::LoadFormat(const YAML::Node& node, const std::string& path, FormatSettings* f) {
  const std::vector<std::string_view> known(kFormatKeys.begin(), kFormatKeys.end());
  Keys(node, path, known, "",
       [&](std::string_view key, const YAML::Node& value, const std::string& key_path,
           const YAML::Mark& mark) {
         if (key == "type") {
           static constexpr std::array<std::string_view, 5> kKinds = {
               "native", "delimited", "key_value", "pattern", "json_lines"};
           if (const auto i = Choice(value, mark, key_path, kKinds))
             f->kind = static_cast<FormatKind>(*i);
         } else if (key == "delimiter") {
           Char(value, mark, key_path, &f->delimiter);
         } else if (key == "decimal_comma") {
           Bool(value, mark, key_path, &f->decimal_comma);
         } else if (key == "header") {
           static constexpr std::array<std::string_view, 3> kModes = {"none", "skip", "names"};
           if (const auto i = Choice(value, mark, key_path, kModes))
             f->header = static_cast<HeaderMode>(*i);
         } else if (key == "fields") {
           LoadFields(value, key_path, f);
         } else if (key == "pair_separator") {
           Char(value, mark, key_path, &f->pair_separator);
         } else if (key == "value_separator") {
           Char(value, mark, key_path, &f->value_separator);
         } else if (key == "pattern") {
           String(value, mark, key_path, &f->pattern);
         } else if (key == "unit") {
           static constexpr std::array<std::string_view, 4> kUnits = {"g", "kg", "oz", "lb"};
           if (const auto i = Choice(value, mark, key_path, kUnits))
             f->unit = static_cast<WeightUnit>(*i);
         } else if (key == "scale") {
           double scale = 0.0;
           if (Number(value, mark, key_path, &scale)) {
             if (scale > 0.0) {
               f->scale = scale;
             } else {
               Error(mark, key_path, fmt::format("must be greater than 0, got {}", value.Scalar()));
             }
           }
         } else if (key == "offset_g") {
           Number(value, mark, key_path, &f->offset_g);
         } else if (key == "time_format") {
           static constexpr std::array<std::string_view, 5> kTimes = {"auto", "iso8601", "epoch_ms",
                                                                      "epoch_s", "none"};
           if (const auto i = Choice(value, mark, key_path, kTimes)) {
             f->time_format = static_cast<TimeFormat>(*i);
           }
         } else if (key == "status") {
           LoadStatus(value, key_path, &f->status);
         }
       });
}

void SourceReader::LoadSource(const YAML::Node& item, const std::string& path, SourceSettings* s,
                              bool* ok) {
  const std::size_t problems_before = problems_->size();
  if (!item.IsMap()) {
    Error(item.Mark(), path, fmt::format("expected a mapping, got {}", Describe(item)));
    *ok = false;
    return;
  }
  // The type decides which keys belong; read it first.
  std::optional<SourceType> type;
  const YAML::Node type_node = item["type"];
  if (!type_node) {
    Error(item.Mark(), path, "missing required key \"type\"");
  } else {
    static constexpr std::array<std::string_view, 5> kNames = {
        kTypes[0].name, kTypes[1].name, kTypes[2].name, kTypes[3].name, kTypes[4].name};
    if (const auto i = Choice(type_node, type_node.Mark(), path + ".type", kNames)) {
      type = kTypes[*i].type;
    }
  }
  if (!type) {
    *ok = false;
    return;
  }
  s->type = *type;
  std::vector<std::string_view> known(kCommonKeys.begin(), kCommonKeys.end());
  auto add = [&](const auto& keys) { known.insert(known.end(), keys.begin(), keys.end()); };
  switch (*type) {
    case SourceType::kTcpListen:
      add(kListenKeys);
      break;
    case SourceType::kTcpConnect:
      add(kConnectKeys);
      break;
    case SourceType::kSerial:
      add(kSerialKeys);
      break;
    case SourceType::kFileFollow:
      add(kFollowKeys);
      break;
    case SourceType::kStdin:
      break;
  }
  const std::string why = fmt::format(" for type {}", SourceTypeName(*type));
  bool has_name = false, has_port = false, has_host = false, has_device = false, has_path = false;
  YAML::Mark format_mark = item.Mark();
  YAML::Mark line_id_mark = item.Mark();
  Keys(
      item, path, known, why,
      [&](std::string_view key, const YAML::Node& value, const std::string& key_path,
          const YAML::Mark& mark) {
        if (key == "type") return;
        if (key == "name") {
          has_name = true;
          if (String(value, mark, key_path, &s->name) && !IsNativeLineId(s->name)) {
            Error(mark, key_path,
                  fmt::format("\"{}\" is not a source name (1 to 64 characters of A-Z, a-z, 0-9, "
                              "'_', '.', '-')",
                              s->name));
          }
        } else if (key == "line_id") {
          line_id_mark = mark;
          if (String(value, mark, key_path, &s->format.line_id) &&
              !IsNativeLineId(s->format.line_id)) {
            Error(mark, key_path,
                  fmt::format("\"{}\" is not a line id (1 to 64 characters of A-Z, a-z, 0-9, '_', "
                              "'.', '-')",
                              s->format.line_id));
          }
        } else if (key == "max_record_bytes") {
          IntTo(value, mark, key_path, 16, 1 << 24, &s->max_record_bytes);
        } else if (key == "format") {
          format_mark = mark;
          LoadFormat(value, key_path, &s->format);
        } else if (key == "address") {
          if (String(value, mark, key_path, &s->address)) {
            boost::system::error_code ec;
            boost::asio::ip::make_address(s->address, ec);
            if (ec) Error(mark, key_path, fmt::format("\"{}\" is not an IP address", s->address));
          }
        } else if (key == "port") {
          has_port = true;
          // A listener may take port 0 (the OS picks one; it is logged).
          IntTo(value, mark, key_path, *type == SourceType::kTcpListen ? 0 : 1, 65535, &s->port);
        } else if (key == "allow") {
          if (StringList(value, mark, key_path, &s->allow)) {
            for (const std::string& entry : s->allow) {
              if (const std::string e = PeerAllowList::CheckEntry(entry); !e.empty()) {
                Error(mark, key_path, e);
              }
            }
          }
        } else if (key == "max_connections") {
          IntTo(value, mark, key_path, 1, 100'000, &s->max_connections);
        } else if (key == "host") {
          has_host = String(value, mark, key_path, &s->host);
        } else if (key == "connect_timeout_ms") {
          IntTo(value, mark, key_path, 100, 600'000, &s->connect_timeout_ms);
        } else if (key == "retry_initial_ms") {
          IntTo(value, mark, key_path, 10, 600'000, &s->retry_initial_ms);
        } else if (key == "retry_max_ms") {
          IntTo(value, mark, key_path, 10, 3'600'000, &s->retry_max_ms);
        } else if (key == "max_attempts") {
          IntTo(value, mark, key_path, 0, 1'000'000, &s->max_attempts);
        } else if (key == "keepalive_s") {
          IntTo(value, mark, key_path, 0, 7200, &s->keepalive_s);
        } else if (key == "device") {
          has_device = String(value, mark, key_path, &s->device);
        } else if (key == "baud") {
          int baud = 0;
          if (IntTo(value, mark, key_path, 1, 4'000'000, &baud)) {
            if (std::find(kBauds.begin(), kBauds.end(), baud) == kBauds.end()) {
              Error(mark, key_path,
                    fmt::format("{} is not a standard rate (e.g. 1200, 2400, 4800, 9600, 19200, "
                                "38400, 57600, 115200)",
                                baud));
            } else {
              s->baud = baud;
            }
          }
        } else if (key == "data_bits") {
          IntTo(value, mark, key_path, 5, 8, &s->data_bits);
        } else if (key == "parity") {
          static constexpr std::array<std::string_view, 3> kParity = {"none", "even", "odd"};
          if (const auto i = Choice(value, mark, key_path, kParity)) {
            s->parity = static_cast<SerialParity>(*i);
          }
        } else if (key == "stop_bits") {
          static constexpr std::array<std::string_view, 3> kStop = {"1", "1.5", "2"};
          if (const auto i = Choice(value, mark, key_path, kStop)) {
            s->stop_bits = static_cast<SerialStopBits>(*i);
          }
        } else if (key == "flow_control") {
          static constexpr std::array<std::string_view, 3> kFlow = {"none", "software", "hardware"};
          if (const auto i = Choice(value, mark, key_path, kFlow)) {
            s->flow_control = static_cast<SerialFlowControl>(*i);
          }
        } else if (key == "path") {
          has_path = String(value, mark, key_path, &s->path);
        } else if (key == "poll_ms") {
          IntTo(value, mark, key_path, 10, 60'000, &s->poll_ms);
        } else if (key == "start_at") {
          static constexpr std::array<std::string_view, 2> kStart = {"end", "beginning"};
          if (const auto i = Choice(value, mark, key_path, kStart)) s->start_at_end = *i == 0;
        }
      });
  if (!has_name) Error(item.Mark(), path, "missing required key \"name\"");
  if (*type == SourceType::kTcpListen && !has_port) {
    Error(item.Mark(), path, "missing required key \"port\"");
  }
  if (*type == SourceType::kTcpConnect) {
    if (!has_host) Error(item.Mark(), path, "missing required key \"host\"");
    if (!has_port) Error(item.Mark(), path, "missing required key \"port\"");
  }
  if (*type == SourceType::kSerial && !has_device) {
    Error(item.Mark(), path, "missing required key \"device\"");
  }
  if (*type == SourceType::kFileFollow && !has_path) {
    Error(item.Mark(), path, "missing required key \"path\"");
  }
  if (s->retry_max_ms < s->retry_initial_ms) {
    Error(item.Mark(), path + ".retry_max_ms", "must be at least retry_initial_ms");
  }
  if (problems_->size() == problems_before) {
    // The format as a whole: consistent settings, a pattern that compiles.
    std::unique_ptr<RecordFormat> format;
    const Status status = MakeRecordFormat(s->format, &format);
    if (!status.ok()) {
      // Messages read "KEY: reason", KEY relative to the source ("line_id",
      // "format.fields.weight") or to its format ("pattern").
      const std::string& message = status.message();
      const std::size_t colon = message.find(": ");
      std::string key = colon == std::string::npos ? "format" : message.substr(0, colon);
      const std::string reason = colon == std::string::npos ? message : message.substr(colon + 2);
      const bool about_line = key == "line_id";
      if (!about_line && key.rfind("format", 0) != 0) key = "format." + key;
      Error(about_line ? line_id_mark : format_mark, path + "." + key, reason);
    }
  }
  *ok = problems_->size() == problems_before;
}

}  // namespace

std::string_view SourceTypeName(SourceType type) {
  for (const TypeInfo& info : kTypes) {
    if (info.type == type) return info.name;
  }
  return "unknown";
}

void LoadSourcesNode(const YAML::Node& node, const std::string& file_name,
                     std::vector<SourceSettings>* out, std::vector<ConfigProblem>* problems) {
  SourceReader reader(file_name, problems);
  out->clear();
  if (node.IsNull()) return;
  if (!node.IsSequence()) {
    reader.Error(node.Mark(), "sources", fmt::format("expected a list, got {}", Describe(node)));
    return;
  }
  std::map<std::string, int, std::less<>> names;  // name → 1-based line where first given
  for (std::size_t i = 0; i < node.size(); ++i) {
    const YAML::Node item = node[i];
    const std::string path = fmt::format("sources[{}]", i);
    // Names must differ even where the rest of an entry is wrong.
    bool duplicate = false;
    if (item.IsMap()) {
      const YAML::Node name_node = item["name"];
      if (name_node && name_node.IsScalar() && !name_node.Scalar().empty()) {
        auto [where, inserted] = names.emplace(name_node.Scalar(), name_node.Mark().line + 1);
        if (!inserted) {
          duplicate = true;
          reader.Error(name_node.Mark(), path + ".name",
                       fmt::format("duplicate source name \"{}\" (first at line {})",
                                   name_node.Scalar(), where->second));
        }
      }
    }
    SourceSettings settings;
    bool ok = false;
    reader.LoadSource(item, path, &settings, &ok);
    if (!ok || duplicate) continue;
    if (settings.type == SourceType::kStdin &&
        std::any_of(out->begin(), out->end(),
                    [](const SourceSettings& s) { return s.type == SourceType::kStdin; })) {
      reader.Error(item.Mark(), path, "only one stdin source can be configured");
      continue;
    }
    out->push_back(std::move(settings));
  }
}

}  // namespace heft
