// http_api.cpp — routes, JSON, metrics and the health check.
#include "http_api.h"

#include <boost/asio/post.hpp>

#include <charconv>
#include <chrono>
#include <cmath>
#include <map>
#include <optional>
#include <utility>
#include <vector>

#include <fmt/format.h>
#include <spdlog/spdlog.h>
#include <nlohmann/json.hpp>

#include "batch_writer.h"
#include "core/record/native_record.h"
#include "core/stats/window_summary.h"
#include "io/alarm_store.h"
#include "io/history_queries.h"
#include "line_engine.h"
#include "live_page.h"

namespace heft {
namespace {

using Json = nlohmann::ordered_json;

constexpr std::size_t kMaxSamples = 20'000;
constexpr std::size_t kDefaultSamples = 600;
constexpr std::size_t kMaxEvents = 1'000;

int HexValue(char c) {
  if (c >= '0' && c <= '9') return c - '0';
  if (c >= 'a' && c <= 'f') return c - 'a' + 10;
  if (c >= 'A' && c <= 'F') return c - 'A' + 10;
  return -1;
}

std::string UrlDecode(std::string_view text) {
  std::string out;
  for (std::size_t i = 0; i < text.size(); ++i) {
    if (text[i] == '+') {
      out += ' ';
    } else if (text[i] == '%' && i + 2 < text.size() && HexValue(text[i + 1]) >= 0 &&
               HexValue(text[i + 2]) >= 0) {
      out += static_cast<char>(HexValue(text[i + 1]) * 16 + HexValue(text[i + 2]));
      i += 2;
    } else {
      out += text[i];
    }
  }
  return out;
}

std::map<std::string, std::string> ParseQuery(std::string_view query) {
  std::map<std::string, std::string> params;
  while (!query.empty()) {
    const std::size_t amp = query.find('&');
    const std::string_view part = query.substr(0, amp);
    const std::size_t eq = part.find('=');
    params[UrlDecode(part.substr(0, eq))] =
        eq == std::string_view::npos ? std::string() : UrlDecode(part.substr(eq + 1));
    if (amp == std::string_view::npos) break;
    query.remove_prefix(amp + 1);
  }
  return params;
}

HttpReply Error(int status, std::string_view message) {
  Json j;
  j["error"] = message;
  return {status, "application/json", j.dump() + "\n"};
}

HttpReply JsonReply(const Json& j) { return {200, "application/json", j.dump() + "\n"}; }

bool ParseCount(const std::string& text, std::size_t* out) {
  std::size_t value = 0;
  const auto [ptr, ec] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (ec != std::errc() || ptr != text.data() + text.size()) return false;
  *out = value;
  return true;
}

std::string IsoTime(std::int64_t ms) {
  char buffer[32];
  FormatTimeMs(ms, buffer);
  return buffer;
}

Json Finite(double value) { return std::isfinite(value) ? Json(value) : Json(nullptr); }

constexpr std::string_view kAlarmsPrefix = "/api/alarms/";
constexpr std::string_view kRequestsPrefix = "/api/alarms/requests/";
constexpr std::size_t kMaxAlarmIdBytes = 200;
constexpr std::size_t kMaxByBytes = 64;
constexpr std::size_t kMaxNoteBytes = 1000;
constexpr std::int64_t kMaxShelveMinutes = 365LL * 24 * 60;  // as `heft shelve --for`

// %XX decoding of one path segment ('+' stays a plus in a path).
std::optional<std::string> PathDecode(std::string_view text) {
  std::string out;
  for (std::size_t i = 0; i < text.size(); ++i) {
    if (text[i] != '%') {
      out += text[i];
      continue;
    }
    if (i + 2 >= text.size() || HexValue(text[i + 1]) < 0 || HexValue(text[i + 2]) < 0) {
      return std::nullopt;
    }
    out += static_cast<char>(HexValue(text[i + 1]) * 16 + HexValue(text[i + 2]));
    i += 2;
  }
  return out;
}

bool HasControlChars(std::string_view text) {
  for (char c : text) {
    if (static_cast<unsigned char>(c) < 0x20 || c == 0x7f) return true;
  }
  return false;
}

Json RequestJson(const AlarmRequest& r) {
  Json j;
  j["request_id"] = r.id;
  j["action"] = r.action;
  j["alarm"] = r.alarm_id;
  j["by"] = r.who;
  j["note"] = r.note;
  j["minutes"] = r.shelve_ms ? Json(*r.shelve_ms / 60'000) : Json(nullptr);
  j["requested"] = IsoTime(r.requested_ms);
  j["status"] = r.status;  // pending, done, refused
  j["result"] = r.result;
  return j;
}

std::int64_t WallNowMs() {
  return std::chrono::duration_cast<std::chrono::milliseconds>(
             std::chrono::system_clock::now().time_since_epoch())
      .count();
}

// Prometheus label value escaping: backslash, quote, newline.
std::string Label(std::string_view text) {
  std::string out;
  for (char c : text) {
    if (c == '\\' || c == '"') out += '\\';
    if (c == '\n') {
      out += "\\n";
      continue;
    }
    out += c;
  }
  return out;
}

std::string Value(double v) {
  if (std::isnan(v)) return "NaN";
  if (std::isinf(v)) return v > 0 ? "+Inf" : "-Inf";
  return fmt::format("{}", v);  // shortest round-trip form
}

}  // namespace

bool BearerTokenMatches(std::string_view authorization, std::string_view expected) {
  constexpr std::string_view kScheme = "bearer ";
  if (expected.empty() || authorization.size() <= kScheme.size()) return false;
  for (std::size_t i = 0; i < kScheme.size(); ++i) {  // the scheme is no secret
    const char c = authorization[i];
    if ((c >= 'A' && c <= 'Z' ? static_cast<char>(c - 'A' + 'a') : c) != kScheme[i]) return false;
  }
  std::string_view given = authorization.substr(kScheme.size());
  while (!given.empty() && (given.front() == ' ' || given.front() == '\t')) given.remove_prefix(1);
  while (!given.empty() && (given.back() == ' ' || given.back() == '\t')) given.remove_suffix(1);
  if (given.empty()) return false;
  // Every byte of `expected` is compared, whatever the sent token holds; the
  // index wraps instead of branching, and a length mismatch only sets a bit.
  unsigned diff = given.size() == expected.size() ? 0u : 1u;
  for (std::size_t i = 0; i < expected.size(); ++i) {
    diff |= static_cast<unsigned char>(given[i % given.size()]) ^
            static_cast<unsigned char>(expected[i]);
  }
  volatile unsigned result = diff;  // keeps the compiler from a short-cut
  return result == 0;
}

HttpApi::HttpApi(boost::asio::io_context& io, const LineEngine& engine, const BatchWriter& writer,
                 PlantSettings plant, std::string database)
    : io_(io),
      engine_(engine),
      writer_(writer),
      plant_(std::move(plant)),
      database_(std::move(database)) {}

HttpApi::~HttpApi() { Stop(); }

void HttpApi::Stop() {
  if (stopped_) return;
  stopped_ = true;
  worker_.join();
  reader_.reset();
  alarms_.reset();
}

void HttpApi::OnWorker(std::function<HttpReply(HistoryReader&)> job, Done done) {
  if (stopped_) {
    done(Error(503, "shutting down"));
    return;
  }
  boost::asio::post(worker_, [this, job = std::move(job), done = std::move(done)]() mutable {
    HttpReply reply;
    if (!reader_) {
      if (Status s = HistoryReader::Open(database_, &reader_); !s.ok()) {
        reply = Error(503, "database not readable: " + s.message());
      }
    }
    if (reader_) reply = job(*reader_);
    boost::asio::post(io_, [done = std::move(done), reply = std::move(reply)]() mutable {
      done(std::move(reply));
    });
  });
}

void HttpApi::OnAlarmWorker(std::function<HttpReply(AlarmStore&)> job, Done done) {
  if (stopped_) {
    done(Error(503, "shutting down"));
    return;
  }
  boost::asio::post(worker_, [this, job = std::move(job), done = std::move(done)]() mutable {
    HttpReply reply;
    if (!alarms_) {
      // Read-write: operator requests are rows heftd's tick picks up (as `heft ack` writes them).
      if (Status s = AlarmStore::Open(database_, AlarmStore::Mode::kReadWrite, &alarms_); !s.ok()) {
        reply = Error(503, "alarm tables not available: " + s.message());
      }
    }
    if (alarms_) reply = job(*alarms_);
    boost::asio::post(io_, [done = std::move(done), reply = std::move(reply)]() mutable {
      done(std::move(reply));
    });
  });
}

void HttpApi::AlarmAction(const std::string& path, const HttpRequestParts& parts, Done done) {
  // POST /api/alarms/ID/ACTION. Without a token these routes do not exist.
  const std::string_view rest = std::string_view(path).substr(kAlarmsPrefix.size());
  const std::size_t slash = rest.rfind('/');
  const std::string_view action = slash == std::string_view::npos ? "" : rest.substr(slash + 1);
  if (token_.empty() || slash == 0 || slash == std::string_view::npos ||
      (action != "ack" && action != "shelve" && action != "unshelve")) {
    done(Error(404, "no such page: " + path));
    return;
  }
  if (!BearerTokenMatches(parts.authorization, token_)) {
    ++auth_failures_;
    // Logged at 1, 2, 4, 8, ... failures so guessing cannot flood the log.
    if ((auth_failures_ & (auth_failures_ - 1)) == 0) {
      spdlog::warn("http: refused an operator action ({} token; {} refusals so far)",
                   parts.authorization.empty() ? "no" : "wrong", auth_failures_);
    }
    HttpReply reply = Error(401,
                            "operator actions need 'Authorization: Bearer TOKEN' with the "
                            "token of the daemon's http.token");
    reply.headers.emplace_back("WWW-Authenticate", "Bearer realm=\"heft\"");
    done(std::move(reply));
    return;
  }
  if (parts.body.size() > kMaxActionBodyBytes) {
    done(Error(413, fmt::format("request body too large ({} bytes; at most {})", parts.body.size(),
                                kMaxActionBodyBytes)));
    return;
  }
  const std::optional<std::string> alarm_id = PathDecode(rest.substr(0, slash));
  if (!alarm_id || alarm_id->empty() || alarm_id->size() > kMaxAlarmIdBytes ||
      HasControlChars(*alarm_id)) {
    done(Error(400, "the alarm id in the path is malformed (e.g. /api/alarms/oats-1:drift/ack)"));
    return;
  }
  AlarmRequest request;
  request.action = std::string(action);
  request.alarm_id = *alarm_id;
  request.who = "http";
  Json body = Json::object();
  if (parts.body.find_first_not_of(" \t\r\n") != std::string::npos) {
    body = Json::parse(parts.body, nullptr, false);
    if (body.is_discarded() || !body.is_object()) {
      done(
          Error(400, "the body must be a JSON object like {\"by\": \"maria\", \"note\": \"...\"}"));
      return;
    }
  }
  for (const auto& [key, value] : body.items()) {
    if (key == "by" || key == "note") {
      const std::size_t limit = key == "by" ? kMaxByBytes : kMaxNoteBytes;
      if (!value.is_string() || value.get_ref<const std::string&>().size() > limit ||
          (key == "by" && value.get_ref<const std::string&>().empty())) {
        done(Error(400, fmt::format("\"{}\" must be a{} string of at most {} bytes", key,
                                    key == "by" ? " non-empty" : "", limit)));
        return;
      }
      (key == "by" ? request.who : request.note) = value.get<std::string>();
      if (key == "by" && HasControlChars(request.who)) {
        done(Error(400, "\"by\" must not hold control characters"));
        return;
      }
    } else if (key == "minutes") {
      if (action != "shelve") {
        done(Error(400, "\"minutes\" is only for shelve"));
        return;
      }
      if (!value.is_number_integer() || value.get<std::int64_t>() <= 0 ||
          value.get<std::int64_t>() > kMaxShelveMinutes) {
        done(
            Error(400, fmt::format("\"minutes\" must be a whole number 1..{}", kMaxShelveMinutes)));
        return;
      }
      request.shelve_ms = value.get<std::int64_t>() * 60'000;
    } else {
      done(Error(400, "unknown field \"" + key + "\" (known: minutes, note, by)"));
      return;
    }
  }
  request.requested_ms = WallNowMs();
  OnAlarmWorker(
      [request](AlarmStore& store) mutable {
        // The same checks and row as `heft ack|shelve|unshelve` (tools/heft/alarm_command.cpp).
        std::optional<AlarmStateRow> known;
        if (Status s = store.FindAlarm(request.alarm_id, &known); !s.ok()) {
          return Error(500, s.message());
        }
        if (!known) {
          return Error(404, "no alarm \"" + request.alarm_id + "\" (GET /api/alarms lists them)");
        }
        if (Status s = store.AddRequest(request, &request.id); !s.ok()) {
          return Error(503, s.message());
        }
        const std::string href = fmt::format("{}{}", kRequestsPrefix, request.id);
        Json j = RequestJson(request);
        j["href"] = href;
        HttpReply reply{202, "application/json", j.dump() + "\n", {}};
        reply.headers.emplace_back("Location", href);
        return reply;
      },
      std::move(done));
}

void HttpApi::Handle(std::string_view method, std::string_view target, Done done) {
  Handle(method, target, HttpRequestParts{}, std::move(done));
}

void HttpApi::Handle(std::string_view method, std::string_view target,
                     const HttpRequestParts& parts, Done done) {
  ++requests_;
  const std::size_t question = target.find('?');
  const std::string path(target.substr(0, question));
  const bool alarm_route = path.rfind(kAlarmsPrefix, 0) == 0 && path.rfind(kRequestsPrefix, 0) != 0;
  if (method == "POST" && alarm_route) {
    AlarmAction(path, parts, std::move(done));
    return;
  }
  if (method != "GET" && method != "HEAD") {
    HttpReply reply = Error(405, "only GET is served here");
    reply.headers.emplace_back("Allow", "GET, HEAD");
    done(std::move(reply));
    return;
  }
  const auto params = ParseQuery(question == std::string_view::npos ? std::string_view()
                                                                    : target.substr(question + 1));
  const auto param = [&](const char* name) -> std::string {
    auto it = params.find(name);
    return it == params.end() ? std::string() : it->second;
  };

  if (path == "/" || path == "/index.html") {
    done({200, "text/html; charset=utf-8", RenderLivePage(engine_.plant(), !token_.empty()), {}});
    return;
  }
  if (path == "/healthz") {
    if (writer_.failing()) {
      done({503, "text/plain; charset=utf-8", "storage failing\n"});
    } else {
      done({200, "text/plain; charset=utf-8", "ok\n"});
    }
    return;
  }
  if (path == "/metrics") {
    done(Metrics());
    return;
  }
  if (path == "/api/lines") {
    OnWorker(
        [](HistoryReader& reader) {
          std::map<std::string, std::vector<std::string>> open;
          if (Status s = reader.OpenEvents(&open); !s.ok()) return Error(500, s.message());
          return HttpReply{200, "", Json(open).dump()};
        },
        [this, done](HttpReply open) {
          done(Lines(open.status == 200 ? open.body : std::string("{}")));
        });
    return;
  }
  if (path == "/api/samples" || path == "/api/stats") {
    const std::string line = param("line");
    if (line.empty()) {
      done(Error(400, "line=L is required"));
      return;
    }
    std::size_t last = kDefaultSamples;
    if (!param("last").empty() && (!ParseCount(param("last"), &last) || last == 0)) {
      done(Error(400, "last must be a whole number above 0"));
      return;
    }
    last = std::min(last, kMaxSamples);
    const bool stats = path == "/api/stats";
    Json snapshot = nullptr;
    for (const LineSnapshot& s : engine_.plant().Snapshot()) {
      if (s.line != line) continue;
      snapshot = {{"packs_since_start", s.packs},
                  {"settling", s.settling},
                  {"level_g", Finite(s.level_g)},
                  {"sigma_g", Finite(s.sigma_g)},
                  {"baseline_level_g", Finite(s.baseline_level_g)},
                  {"baseline_sigma_g", Finite(s.baseline_sigma_g)},
                  {"open_findings", s.open_findings}};
    }
    OnWorker(
        [line, last, stats, snapshot](HistoryReader& reader) {
          std::vector<HistorySample> samples;
          if (Status s = reader.Samples({line, std::nullopt, std::nullopt, last}, &samples);
              !s.ok()) {
            return Error(500, s.message());
          }
          Json j;
          j["line"] = line;
          if (stats) {
            std::vector<double> ok;
            for (const HistorySample& s : samples) {
              if (s.status == 0) ok.push_back(s.grams);
            }
            const WindowSummary w = SummarizeSeries(ok);
            j["live"] = snapshot;
            j["window_packs"] = w.count;
            if (w.count > 0) {
              j["mean_g"] = w.mean;
              j["sd_g"] = w.sd;
              j["short_term_sigma_g"] = w.mr_sigma;
              j["min_g"] = w.min;
              j["q1_g"] = w.q1;
              j["median_g"] = w.median;
              j["q3_g"] = w.q3;
              j["max_g"] = w.max;
            }
            return JsonReply(j);
          }
          Json t = Json::array(), g = Json::array(), h = Json::array(), st = Json::array();
          for (const HistorySample& s : samples) {
            t.push_back(s.time_ms);
            g.push_back(s.grams);
            h.push_back(s.head);
            st.push_back(s.status);
          }
          j["time_ms"] = std::move(t);
          j["grams"] = std::move(g);
          j["head"] = std::move(h);
          j["status"] = std::move(st);
          j["live"] = snapshot;
          return JsonReply(j);
        },
        done);
    return;
  }
  if (path == "/api/events") {
    EventQuery query;
    if (!param("line").empty()) query.line = param("line");
    if (!param("since").empty()) {
      query.since_ms = ParseTimeMs(param("since"));
      if (!query.since_ms) {
        done(Error(400, "since must be ISO-8601 UTC or epoch milliseconds"));
        return;
      }
    }
    std::size_t limit = 200;
    if (!param("limit").empty() && !ParseCount(param("limit"), &limit)) {
      done(Error(400, "limit must be a whole number"));
      return;
    }
    limit = std::min(limit, kMaxEvents);
    OnWorker(
        [query, limit](HistoryReader& reader) {
          std::vector<HistoryEvent> events;
          if (Status s = reader.Events(query, &events); !s.ok()) return Error(500, s.message());
          // The newest `limit`, oldest first.
          const std::size_t first = events.size() > limit ? events.size() - limit : 0;
          Json list = Json::array();
          for (std::size_t i = first; i < events.size(); ++i) {
            const Finding& f = events[i].finding;
            Json e;
            e["time"] = IsoTime(f.at_time_ms);
            e["time_ms"] = f.at_time_ms;
            e["line"] = f.line;
            e["event"] = TransitionName(f.transition);
            e["kind"] = KindName(f.kind);
            e["severity"] = SeverityName(f.severity);
            e["head"] = f.head ? Json(*f.head) : Json(nullptr);
            e["message"] = events[i].message;
            list.push_back(std::move(e));
          }
          return JsonReply(Json{{"events", list}});
        },
        done);
    return;
  }
  if (path == "/api/alarms") {
    OnAlarmWorker(
        [actions = !token_.empty()](AlarmStore& store) {
          std::vector<AlarmStateRow> rows;
          if (Status s = store.ListAlarms(&rows); !s.ok()) return Error(500, s.message());
          Json list = Json::array();
          for (const AlarmStateRow& r : rows) {
            list.push_back(
                {{"id", r.alarm_id},
                 {"line", r.line},
                 {"kind", r.kind},
                 {"head", r.head ? Json(*r.head) : Json(nullptr)},
                 {"state", r.state},
                 {"priority", r.priority},
                 {"since", IsoTime(r.since_ms)},
                 {"since_ms", r.since_ms},
                 {"shelved_until",
                  r.shelved_until_ms ? Json(IsoTime(*r.shelved_until_ms)) : Json(nullptr)},
                 {"message", r.message}});
          }
          return JsonReply(Json{{"actions", actions}, {"alarms", list}});
        },
        done);
    return;
  }
  if (path.rfind(kRequestsPrefix, 0) == 0) {
    std::size_t id = 0;
    if (!ParseCount(path.substr(kRequestsPrefix.size()), &id) || id == 0) {
      done(Error(400, "request id must be a whole number above 0"));
      return;
    }
    OnAlarmWorker(
        [id](AlarmStore& store) {
          AlarmRequest request;
          // AlarmStore reports a missing row as a read error; both mean "not here".
          if (Status s = store.GetRequest(static_cast<std::int64_t>(id), &request); !s.ok()) {
            return Error(404, fmt::format("no operator request {}", id));
          }
          return JsonReply(RequestJson(request));
        },
        done);
    return;
  }
  if (path == "/api/lots") {
    const std::string line = param("line");
    OnWorker(
        [line](HistoryReader& reader) {
          std::vector<LotReport> lots;
          if (Status s = reader.Lots(line, std::nullopt, std::nullopt, &lots); !s.ok()) {
            return Error(500, s.message());
          }
          // The newest 200, oldest first.
          const std::size_t first = lots.size() > 200 ? lots.size() - 200 : 0;
          Json list = Json::array();
          for (std::size_t i = first; i < lots.size(); ++i) {
            const LotReport& lot = lots[i];
            const comply::LotFigures& f = lot.figures;
            Json verdicts = Json::array();
            for (const LotVerdict& v : lot.verdicts) {
              verdicts.push_back({{"rule", v.rule_id},
                                  {"state", v.state},
                                  {"margin", Finite(v.margin)},
                                  {"unit", v.unit}});
            }
            list.push_back({{"line", lot.line},
                            {"lot", lot.lot_id},
                            {"partial", lot.partial},
                            {"opened", IsoTime(lot.opened_ms)},
                            {"packs", f.count},
                            {"mean_g", Finite(f.mean_g)},
                            {"sd_g", Finite(f.s_g)},
                            {"below_t1", f.t1_count},
                            {"below_t2", f.t2_count},
                            {"giveaway_g_per_pack", Finite(f.giveaway_per_pack_g)},
                            {"verdicts", verdicts}});
          }
          return JsonReply(Json{{"lots", list}});
        },
        done);
    return;
  }
  done(Error(404, "no such page: " + path));
}

HttpReply HttpApi::Lines(const std::string& open_json) const {
  Json open = Json::parse(open_json, nullptr, false);
  if (open.is_discarded()) open = Json::object();
  Json lines = Json::array();
  for (const LineSnapshot& s : engine_.plant().Snapshot()) {
    const LineSettings& settings = engine_.plant().SettingsFor(s.line);
    Json j;
    j["line"] = s.line;
    j["product"] = settings.product;
    j["nominal_g"] = settings.nominal_g ? Json(*settings.nominal_g) : Json(nullptr);
    j["target_g"] = settings.target_g ? Json(*settings.target_g) : Json(nullptr);
    j["packs"] = s.packs;
    j["last_time"] = s.packs > 0 ? Json(IsoTime(s.last_time_ms)) : Json(nullptr);
    j["state"] = s.packs == 0          ? "waiting"
                 : s.settling          ? "settling"
                 : s.open_findings > 0 ? "alert"
                                       : "running";
    j["settling"] = s.settling;
    j["level_g"] = Finite(s.level_g);
    j["sigma_g"] = Finite(s.sigma_g);
    j["baseline_level_g"] = Finite(s.baseline_level_g);
    j["baseline_sigma_g"] = Finite(s.baseline_sigma_g);
    // Giveaway rate: rolling mean above nominal per pack, and as % of nominal.
    if (settings.nominal_g && s.packs > 0) {
      j["giveaway_g_per_pack"] = Finite(s.level_g - *settings.nominal_g);
      j["giveaway_percent"] =
          Finite((s.level_g - *settings.nominal_g) / *settings.nominal_g * 100.0);
    } else {
      j["giveaway_g_per_pack"] = nullptr;
      j["giveaway_percent"] = nullptr;
    }
    j["open_findings"] = s.open_findings;
    j["open_events"] = open.contains(s.line) ? open[s.line] : Json::array();
    lines.push_back(std::move(j));
  }
  return JsonReply(Json{{"lines", lines}});
}

HttpReply HttpApi::Metrics() const {
  std::string out;
  out.reserve(4096);
  const auto family = [&](const char* name, const char* type, const char* help) {
    out += fmt::format("# HELP {} {}\n# TYPE {} {}\n", name, help, name, type);
  };
  const LineEngine::Totals& t = engine_.totals();
  family("heft_records_total", "counter", "Feed records seen, by verdict (all lines).");
  out += fmt::format("heft_records_total{{verdict=\"accepted\"}} {}\n", t.accepted);
  out += fmt::format("heft_records_total{{verdict=\"malformed\"}} {}\n", t.malformed);
  out += fmt::format("heft_records_total{{verdict=\"refused\"}} {}\n", t.refused);
  family("heft_events_total", "counter", "Findings raised and cleared (all lines).");
  out += fmt::format("heft_events_total{{transition=\"raised\"}} {}\n", t.raised);
  out += fmt::format("heft_events_total{{transition=\"cleared\"}} {}\n", t.cleared);

  const std::vector<LineSnapshot> lines = engine_.plant().Snapshot();
  family("heft_line_packs_total", "counter", "Packs accepted per line since heftd started.");
  for (const auto& s : lines) {
    out += fmt::format("heft_line_packs_total{{line=\"{}\"}} {}\n", Label(s.line), s.packs);
  }
  family("heft_line_level_grams", "gauge", "Rolling mean net weight per line.");
  for (const auto& s : lines) {
    out +=
        fmt::format("heft_line_level_grams{{line=\"{}\"}} {}\n", Label(s.line), Value(s.level_g));
  }
  family("heft_line_sigma_grams", "gauge", "Rolling short-term sigma per line.");
  for (const auto& s : lines) {
    out +=
        fmt::format("heft_line_sigma_grams{{line=\"{}\"}} {}\n", Label(s.line), Value(s.sigma_g));
  }
  family("heft_line_open_findings", "gauge", "Findings raised and not yet cleared per line.");
  for (const auto& s : lines) {
    out +=
        fmt::format("heft_line_open_findings{{line=\"{}\"}} {}\n", Label(s.line), s.open_findings);
  }
  family("heft_line_settling", "gauge", "1 while the line settles after a start, else 0.");
  for (const auto& s : lines) {
    out += fmt::format("heft_line_settling{{line=\"{}\"}} {}\n", Label(s.line), s.settling ? 1 : 0);
  }
  family("heft_line_last_pack_timestamp_seconds", "gauge", "Record time of the last pack.");
  for (const auto& s : lines) {
    if (s.packs == 0) continue;
    out += fmt::format("heft_line_last_pack_timestamp_seconds{{line=\"{}\"}} {}\n", Label(s.line),
                       Value(static_cast<double>(s.last_time_ms) / 1000.0));
  }
  const BatchWriter::Counters& w = writer_.counters();
  family("heft_db_rows_written_total", "counter", "Rows committed to SQLite.");
  out += fmt::format("heft_db_rows_written_total{{table=\"events\"}} {}\n", w.events_written);
  out += fmt::format("heft_db_rows_written_total{{table=\"samples\"}} {}\n", w.samples_written);
  family("heft_db_samples_dropped_total", "counter", "Raw samples dropped: queue full.");
  out += fmt::format("heft_db_samples_dropped_total {}\n", w.samples_dropped);
  family("heft_db_failed_writes_total", "counter", "Batch writes that failed.");
  out += fmt::format("heft_db_failed_writes_total {}\n", w.failed_writes);
  family("heft_db_queue_depth", "gauge", "Rows waiting for the next batch write.");
  out += fmt::format("heft_db_queue_depth{{table=\"events\"}} {}\n", writer_.queued_events());
  out += fmt::format("heft_db_queue_depth{{table=\"samples\"}} {}\n", writer_.queued_samples());
  family("heft_db_failing", "gauge", "1 while storage writes fail, else 0.");
  out += fmt::format("heft_db_failing {}\n", writer_.failing() ? 1 : 0);
  family("heft_http_requests_total", "counter", "HTTP requests answered.");
  out += fmt::format("heft_http_requests_total {}\n", requests_);
  family("heft_http_auth_failures_total", "counter",
         "Operator actions refused for a missing or wrong token.");
  out += fmt::format("heft_http_auth_failures_total {}\n", auth_failures_);
  return {200, "text/plain; version=0.0.4; charset=utf-8", std::move(out)};
}

}  // namespace heft
