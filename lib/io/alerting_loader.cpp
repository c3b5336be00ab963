// alerting_loader.cpp — YAML → AlertingSettings and MessageCatalog. yaml-cpp
// exceptions stay in this file.
#include "io/alerting_loader.h"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <sstream>

#include <fmt/format.h>

#include "core/record/native_record.h"

namespace heft {
namespace {

std::string Join(std::string_view path, std::string_view key) {
  return path.empty() ? std::string(key) : fmt::format("{}.{}", path, key);
}

std::string Describe(const YAML::Node& n) {
  if (n.IsMap()) return "a mapping";
  if (n.IsSequence()) return "a list";
  if (n.IsNull()) return "nothing";
  return fmt::format("\"{}\"", n.Scalar());
}

class Reader {
 public:
  Reader(const AlertingErrorFn& error) : error_(error) {}

  void Error(const YAML::Mark& m, std::string_view path, std::string_view reason) {
    error_(m, path, reason);
  }

  // Calls handle(key, value, path, mark) for each key; unknown ones are errors.
  template <class F>
  void Keys(const YAML::Node& map, std::string_view path,
            std::initializer_list<std::string_view> known, F&& handle) {
    if (map.IsNull()) return;
    if (!map.IsMap()) {
      Error(map.Mark(), path, "expected a mapping, got " + Describe(map));
      return;
    }
    std::set<std::string> seen;
    for (const auto& kv : map) {
      const std::string name = kv.first.Scalar();
      const std::string key_path = Join(path, name);
      if (!seen.insert(name).second) {
        Error(kv.first.Mark(), key_path, "duplicate key");
        continue;
      }
      if (std::find(known.begin(), known.end(), name) == known.end()) {
        std::string list;
        for (std::string_view k : known) list += (list.empty() ? "" : ", ") + std::string(k);
        Error(kv.first.Mark(), key_path, "unknown key (expected one of: " + list + ")");
        continue;
      }
      const YAML::Node& value = kv.second;
      handle(name, value, key_path, value.IsNull() ? kv.first.Mark() : value.Mark());
    }
  }

  bool String(const YAML::Node& n, const YAML::Mark& m, std::string_view path, std::string* out,
              bool allow_empty = true) {
    if (n.IsNull() && allow_empty) {
      out->clear();
      return true;
    }
    if (!n.IsScalar()) {
      Error(m, path, "expected a string, got " + Describe(n));
      return false;
    }
    if (n.Scalar().empty() && !allow_empty) {
      Error(m, path, "must not be empty");
      return false;
    }
    *out = n.Scalar();
    return true;
  }

  bool Number(const YAML::Node& n, const YAML::Mark& m, std::string_view path, double low,
              double high, double* out) {
    double v = 0;
    bool ok = n.IsScalar() && n.Tag() != "!";
    if (ok) {
      std::string s = n.Scalar();
      if (!s.empty() && s[0] == '+') s.erase(0, 1);
      const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
      ok = !s.empty() && ec == std::errc() && end == s.data() + s.size() && std::isfinite(v);
    }
    if (!ok) {
      Error(m, path, "expected a number, got " + Describe(n));
      return false;
    }
    if (v < low || v > high) {
      Error(m, path, fmt::format("must be between {} and {}, got {}", low, high, n.Scalar()));
      return false;
    }
    *out = v;
    return true;
  }

  template <class Int>
  bool Integer(const YAML::Node& n, const YAML::Mark& m, std::string_view path, std::int64_t low,
               std::int64_t high, Int* out) {
    double v = 0;
    if (!Number(n, m, path, static_cast<double>(low), static_cast<double>(high), &v)) return false;
    if (v != std::floor(v)) {
      Error(m, path, "expected a whole number, got " + Describe(n));
      return false;
    }
    *out = static_cast<Int>(v);
    return true;
  }

  // Seconds (decimals allowed) → milliseconds.
  bool Seconds(const YAML::Node& n, const YAML::Mark& m, std::string_view path, double low,
               double high, std::int64_t* out_ms) {
    double v = 0;
    if (!Number(n, m, path, low, high, &v)) return false;
    *out_ms = static_cast<std::int64_t>(std::llround(v * 1000.0));
    return true;
  }

  bool Bool(const YAML::Node& n, const YAML::Mark& m, std::string_view path, bool* out) {
    if (n.IsScalar() && (n.Scalar() == "true" || n.Scalar() == "false")) {
      *out = n.Scalar() == "true";
      return true;
    }
    Error(m, path, "expected true or false, got " + Describe(n));
    return false;
  }

  bool Priority(const YAML::Node& n, const YAML::Mark& m, std::string_view path,
                AlarmPriority* out) {
    std::string s;
    if (!String(n, m, path, &s)) return false;
    if (auto p = AlarmPriorityFromName(s)) {
      *out = *p;
      return true;
    }
    Error(m, path, "must be low, medium or high, got " + Describe(n));
    return false;
  }

  bool StringList(const YAML::Node& n, const YAML::Mark& m, std::string_view path,
                  std::vector<std::string>* out) {
    if (n.IsNull()) return true;
    if (!n.IsSequence()) {
      Error(m, path, "expected a list, got " + Describe(n));
      return false;
    }
    bool ok = true;
    for (std::size_t i = 0; i < n.size(); ++i) {
      std::string s;
      if (String(n[i], n[i].Mark(), fmt::format("{}[{}]", path, i), &s, false)) {
        out->push_back(s);
      } else {
        ok = false;
      }
    }
    return ok;
  }

 private:
  const AlertingErrorFn& error_;
};

bool IsChannelName(std::string_view s) {
  if (s.empty() || s.size() > 64) return false;
  return std::all_of(s.begin(), s.end(), [](char c) {
    return std::isalnum(static_cast<unsigned char>(c)) || c == '_' || c == '-';
  });
}

void LoadRoute(Reader& r, const YAML::Node& node, const std::string& path, ChannelRoute* out) {
  r.Keys(
      node, path, {"lines", "areas", "min_priority", "operator_actions"},
      [&](const std::string& key, const YAML::Node& v, const std::string& p, const YAML::Mark& m) {
        if (key == "lines") r.StringList(v, m, p, &out->lines);
        if (key == "areas") r.StringList(v, m, p, &out->areas);
        if (key == "min_priority") r.Priority(v, m, p, &out->min_priority);
        if (key == "operator_actions") r.Bool(v, m, p, &out->operator_actions);
      });
}

// Keys each channel type takes besides name, type, route, timeout_ms.
const std::map<std::string_view, std::vector<std::string_view>>& TypeKeys() {
  static const std::map<std::string_view, std::vector<std::string_view>> kKeys = {
      {"log", {}},
      {"syslog", {"socket", "facility"}},
      {"command", {"argv"}},
      {"webhook", {"url", "bearer_token", "tls"}},
      {"mqtt",
       {"host", "port", "client_id", "topic_prefix", "username", "password", "keepalive_s", "tls"}},
  };
  return kKeys;
}

void LoadChannel(Reader& r, const YAML::Node& node, const std::string& path,
                 std::set<std::string>* names, std::vector<ChannelSettings>* out) {
  if (!node.IsMap()) {
    r.Error(node.Mark(), path, "expected a mapping, got " + Describe(node));
    return;
  }
  ChannelSettings c;
  std::string type_name;
  const YAML::Node type_node = node["type"];
  if (!type_node) {
    r.Error(node.Mark(), path,
            "missing required key \"type\" (log, syslog, command, webhook, mqtt)");
    return;
  }
  if (!r.String(type_node, type_node.Mark(), path + ".type", &type_name)) return;
  auto type_it = TypeKeys().find(type_name);
  if (type_it == TypeKeys().end()) {
    r.Error(type_node.Mark(), path + ".type",
            "must be log, syslog, command, webhook or mqtt, got " + Describe(type_node));
    return;
  }
  static const std::map<std::string_view, ChannelType> kTypes = {{"log", ChannelType::kLog},
                                                                 {"syslog", ChannelType::kSyslog},
                                                                 {"command", ChannelType::kCommand},
                                                                 {"webhook", ChannelType::kWebhook},
                                                                 {"mqtt", ChannelType::kMqtt}};
  c.type = kTypes.at(type_name);
  if (c.type == ChannelType::kMqtt) c.timeout_ms = 10'000;
  // Allowed keys: the common ones plus the type's own.
  std::vector<std::string_view> allowed = {"name", "type", "route", "timeout_ms"};
  for (std::string_view k : type_it->second) allowed.push_back(k);
  bool has_name = false;
  YAML::Mark name_mark = node.Mark();
  // Keys() takes an initializer_list; check membership here instead.
  for (const auto& kv : node) {
    const std::string key = kv.first.Scalar();
    const std::string p = Join(path, key);
    const YAML::Node& v = kv.second;
    const YAML::Mark m = v.IsNull() ? kv.first.Mark() : v.Mark();
    if (std::find(allowed.begin(), allowed.end(), key) == allowed.end()) {
      bool other_type = false;
      for (const auto& [t, keys] : TypeKeys()) {
        other_type |= std::find(keys.begin(), keys.end(), key) != keys.end();
      }
      r.Error(kv.first.Mark(), p,
              other_type ? "is not a setting of a " + type_name + " channel"
                         : std::string("unknown key"));
      continue;
    }
    if (key == "type") continue;
    if (key == "name") {
      has_name = true;
      name_mark = m;
      if (!r.String(v, m, p, &c.name, false)) continue;
      if (!IsChannelName(c.name)) {
        r.Error(m, p, "must be 1 to 64 characters of A-Z, a-z, 0-9, '_', '-'");
      } else if (!names->insert(c.name).second) {
        r.Error(m, p, "duplicate channel name \"" + c.name + "\"");
      }
    } else if (key == "route") {
      LoadRoute(r, v, p, &c.route);
    } else if (key == "timeout_ms") {
      r.Integer(v, m, p, 10, 600'000, &c.timeout_ms);
    } else if (key == "argv") {
      if (r.StringList(v, m, p, &c.argv) && c.argv.empty()) {
        r.Error(m, p, "must name the program to run (a list: [program, arg, ...])");
      }
    } else if (key == "url") {
      if (r.String(v, m, p, &c.url, false)) {
        const bool https = c.url.rfind("https://", 0) == 0 && c.url.size() > 8;
        if (!https && (c.url.rfind("http://", 0) != 0 || c.url.size() <= 7)) {
          r.Error(m, p, "must start with http:// or https://, got " + Describe(v));
        }
      }
    } else if (key == "bearer_token") {
      r.String(v, m, p, &c.bearer_token);
    } else if (key == "host") {
      r.String(v, m, p, &c.host, false);
    } else if (key == "port") {
      r.Integer(v, m, p, 1, 65535, &c.port);
    } else if (key == "client_id") {
      r.String(v, m, p, &c.client_id, false);
    } else if (key == "topic_prefix") {
      if (r.String(v, m, p, &c.topic_prefix, false)) {
        if (c.topic_prefix.find_first_of("+#") != std::string::npos ||
            c.topic_prefix.front() == '/' || c.topic_prefix.back() == '/' ||
            c.topic_prefix.find("//") != std::string::npos || c.topic_prefix.front() == '$') {
          r.Error(m, p,
                  "must be topic levels without wildcards (+ #), without a leading or trailing "
                  "'/', empty levels or a leading '$'");
        }
      }
    } else if (key == "username") {
      r.String(v, m, p, &c.username);
    } else if (key == "password") {
      r.String(v, m, p, &c.password);
    } else if (key == "keepalive_s") {
      r.Integer(v, m, p, 5, 3600, &c.keepalive_s);
    } else if (key == "tls" && c.type == ChannelType::kWebhook) {
      // Only the trust anchor: the certificate and host name are always checked
      // (a self-signed test server: name its own certificate as ca_file).
      r.Keys(v, p, {"ca_file", "cert_file", "key_file", "insecure"},
             [&](const std::string& k, const YAML::Node& tv, const std::string& tp,
                 const YAML::Mark& tm) {
               if (k == "ca_file") {
                 r.String(tv, tm, tp, &c.tls.ca_file, false);
               } else if (k == "insecure") {
                 r.Error(tm, tp,
                         "is not offered for webhooks: the server certificate and host name are "
                         "always verified (for a self-signed server, set ca_file to its "
                         "certificate)");
               } else {
                 r.Error(tm, tp, "client certificates are not supported for webhooks");
               }
             });
    } else if (key == "tls") {
      c.tls.enabled = true;
      r.Keys(v, p, {"ca_file", "cert_file", "key_file", "insecure"},
             [&](const std::string& k, const YAML::Node& tv, const std::string& tp,
                 const YAML::Mark& tm) {
               if (k == "ca_file") r.String(tv, tm, tp, &c.tls.ca_file);
               if (k == "cert_file") r.String(tv, tm, tp, &c.tls.cert_file);
               if (k == "key_file") r.String(tv, tm, tp, &c.tls.key_file);
               if (k == "insecure") r.Bool(tv, tm, tp, &c.tls.insecure);
             });
      if (c.tls.cert_file.empty() != c.tls.key_file.empty()) {
        r.Error(v.Mark(), p, "cert_file and key_file go together");
      }
    } else if (key == "socket") {
      r.String(v, m, p, &c.socket, false);
    } else if (key == "facility") {
      r.Integer(v, m, p, 0, 23, &c.facility);
    }
  }
  if (!has_name) {
    r.Error(name_mark, path, "missing required key \"name\"");
    return;
  }
  if (c.type == ChannelType::kCommand && c.argv.empty() && !node["argv"]) {
    r.Error(node.Mark(), path, "a command channel needs \"argv\"");
    return;
  }
  if (c.type == ChannelType::kWebhook && c.url.empty() && !node["url"]) {
    r.Error(node.Mark(), path, "a webhook channel needs \"url\"");
    return;
  }
  if (c.type == ChannelType::kWebhook) {
    c.tls.enabled = c.url.rfind("https://", 0) == 0;
    if (node["tls"] && !c.tls.enabled) {
      r.Error(node["tls"].Mark(), path + ".tls", "applies to https:// URLs only");
    }
  }
  out->push_back(std::move(c));
}

}  // namespace

void LoadAlerting(const YAML::Node& node, const std::string& config_path,
                  const AlertingErrorFn& error, AlertingSettings* out) {
  Reader r(error);
  AlarmSettings& a = out->alarm;
  YAML::Mark messages_mark;
  bool has_messages = false;
  r.Keys(
      node, "alerting",
      {"messages", "areas", "priorities", "escalate_sigma", "on_delay_s", "off_delay_s",
       "realarm_deadband_s", "realarm_s", "chatter_count", "chatter_window_s", "flood_start_above",
       "flood_end_below", "flood_window_s", "shelve_default_s", "shelve_max_s", "outbox",
       "channels"},
      [&](const std::string& key, const YAML::Node& v, const std::string& p, const YAML::Mark& m) {
        if (key == "messages") {
          has_messages = r.String(v, m, p, &out->messages_file, false);
          messages_mark = m;
        } else if (key == "areas") {
          if (!v.IsMap()) {
            r.Error(m, p, "expected a mapping of area → list of line ids, got " + Describe(v));
            return;
          }
          for (const auto& kv : v) {
            const std::string area = kv.first.Scalar();
            const std::string ap = Join(p, area);
            if (area.empty() || area.find(':') != std::string::npos) {
              r.Error(kv.first.Mark(), ap, "an area name must be non-empty and without ':'");
              continue;
            }
            std::vector<std::string> lines;
            r.StringList(kv.second, kv.second.Mark(), ap, &lines);
            for (const std::string& line : lines) {
              if (!IsNativeLineId(line)) {
                r.Error(kv.second.Mark(), ap, "\"" + line + "\" is not a line id");
              } else if (auto [it, fresh] = a.area_of_line.emplace(line, area); !fresh) {
                r.Error(kv.second.Mark(), ap,
                        "line \"" + line + "\" is already in area \"" + it->second + "\"");
              }
            }
          }
        } else if (key == "priorities") {
          if (!v.IsMap()) {
            r.Error(m, p, "expected a mapping of finding kind → low|medium|high");
            return;
          }
          for (const auto& kv : v) {
            const std::string kind = kv.first.Scalar();
            const auto k = KindFromName(kind);
            if (!k) {
              r.Error(kv.first.Mark(), Join(p, kind), "not a finding kind");
              continue;
            }
            r.Priority(kv.second, kv.second.Mark(), Join(p, kind),
                       &a.priority[static_cast<int>(*k)]);
          }
        } else if (key == "escalate_sigma") {
          r.Number(v, m, p, 0.5, 100, &a.escalate_sigma);
        } else if (key == "on_delay_s") {
          r.Seconds(v, m, p, 0, 3600, &a.on_delay_ms);
        } else if (key == "off_delay_s") {
          r.Seconds(v, m, p, 0, 3600, &a.off_delay_ms);
        } else if (key == "realarm_deadband_s") {
          r.Seconds(v, m, p, 0, 86'400, &a.realarm_deadband_ms);
        } else if (key == "realarm_s") {
          r.Seconds(v, m, p, 0, 86'400, &a.realarm_ms);
        } else if (key == "chatter_count") {
          r.Integer(v, m, p, 0, 1000, &a.chatter_count);
        } else if (key == "chatter_window_s") {
          r.Seconds(v, m, p, 1, 86'400, &a.chatter_window_ms);
        } else if (key == "flood_start_above") {
          r.Integer(v, m, p, 1, 100'000, &a.flood_start_above);
        } else if (key == "flood_end_below") {
          r.Integer(v, m, p, 1, 100'000, &a.flood_end_below);
        } else if (key == "flood_window_s") {
          r.Seconds(v, m, p, 1, 86'400, &a.flood_window_ms);
        } else if (key == "shelve_default_s") {
          r.Seconds(v, m, p, 1, 30 * 86'400.0, &a.shelve_default_ms);
        } else if (key == "shelve_max_s") {
          r.Seconds(v, m, p, 1, 30 * 86'400.0, &a.shelve_max_ms);
        } else if (key == "outbox") {
          r.Keys(v, p, {"expire_s", "retry_min_ms", "retry_max_ms"},
                 [&](const std::string& k, const YAML::Node& ov, const std::string& op,
                     const YAML::Mark& om) {
                   if (k == "expire_s")
                     r.Seconds(ov, om, op, 1, 30 * 86'400.0, &out->outbox.expire_ms);
                   if (k == "retry_min_ms")
                     r.Integer(ov, om, op, 10, 3'600'000, &out->outbox.retry_min_ms);
                   if (k == "retry_max_ms")
                     r.Integer(ov, om, op, 10, 3'600'000, &out->outbox.retry_max_ms);
                 });
        } else if (key == "channels") {
          if (!v.IsSequence()) {
            if (!v.IsNull()) r.Error(m, p, "expected a list, got " + Describe(v));
            return;
          }
          std::set<std::string> names;
          for (std::size_t i = 0; i < v.size(); ++i) {
            LoadChannel(r, v[i], fmt::format("{}[{}]", p, i), &names, &out->channels);
          }
        }
      });
  if (a.flood_end_below > a.flood_start_above) {
    r.Error(node.Mark(), "alerting.flood_end_below", "must not be more than flood_start_above");
  }
  if (a.shelve_default_ms > a.shelve_max_ms) {
    r.Error(node.Mark(), "alerting.shelve_default_s", "must not be more than shelve_max_s");
  }
  if (out->outbox.retry_min_ms > out->outbox.retry_max_ms) {
    r.Error(node.Mark(), "alerting.outbox.retry_min_ms", "must not be more than retry_max_ms");
  }
  if (has_messages) {
    std::filesystem::path file(out->messages_file);
    if (file.is_relative()) file = std::filesystem::path(config_path).parent_path() / file;
    out->messages_file = file.string();
    std::vector<std::string> errors;
    if (!LoadMessageCatalogFile(out->messages_file, &out->catalog, &errors).ok()) {
      for (const std::string& e : errors) r.Error(messages_mark, "alerting.messages", e);
    }
  }
}

Status LoadMessageCatalogText(const std::string& text, const std::string& name, MessageCatalog* out,
                              std::vector<std::string>* errors) {
  errors->clear();
  MessageCatalog catalog;
  auto error = [&](const YAML::Mark& m, std::string_view path, std::string_view reason) {
    errors->push_back(fmt::format("{}:{}:{}: {}: {}", name, m.is_null() ? 0 : m.line + 1,
                                  m.is_null() ? 0 : m.column + 1, path, reason));
  };
  auto add = [&](const std::string& key, const YAML::Node& v, const std::string& path) {
    if (!v.IsScalar()) {
      error(v.Mark(), path, "expected a template string, got " + Describe(v));
      return;
    }
    if (Status s = ValidateTemplate(v.Scalar(), MessagePlaceholders()); !s.ok()) {
      error(v.Mark(), path, s.message());
      return;
    }
    catalog.templates[key] = v.Scalar();
  };
  try {
    const YAML::Node root = YAML::Load(text);
    const YAML::Node messages = root.IsMap() ? root["messages"] : YAML::Node();
    if (!messages || !messages.IsMap()) {
      error(root.Mark(), "(top level)", "expected a mapping with a \"messages\" mapping");
    } else {
      for (const auto& kv : messages) {
        const std::string key = kv.first.Scalar();
        const std::string path = "messages." + key;
        if (KindFromName(key)) {
          if (!kv.second.IsMap()) {
            error(kv.second.Mark(), path, "expected raised, raised_head and cleared templates");
            continue;
          }
          for (const auto& tv : kv.second) {
            const std::string sub = tv.first.Scalar();
            const std::string full = key + "." + sub;
            if (!IsMessageKey(full)) {
              error(tv.first.Mark(), path + "." + sub,
                    "unknown message (expected raised, raised_head or cleared)");
              continue;
            }
            add(full, tv.second, path + "." + sub);
          }
        } else if (IsMessageKey(key)) {
          add(key, kv.second, path);
        } else {
          error(kv.first.Mark(), path,
                "not a finding kind or a lifecycle message (acknowledged, shelved, unshelved, "
                "shelve_expired, suppressed, unsuppressed, chattering, chatter_ended, "
                "escalated, realarm, flood_started, flood_ended)");
        }
      }
    }
  } catch (const YAML::Exception& e) {
    error(e.mark, "YAML syntax error", e.msg);
  }
  if (!errors->empty()) return Status::Error(errors->front());
  *out = std::move(catalog);
  return Status::Ok();
}

Status LoadMessageCatalogFile(const std::string& path, MessageCatalog* out,
                              std::vector<std::string>* errors) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    errors->assign({path + ": cannot read message templates"});
    return Status::Error(errors->front());
  }
  std::stringstream buffer;
  buffer << in.rdbuf();
  return LoadMessageCatalogText(buffer.str(), path, out, errors);
}

}  // namespace heft
