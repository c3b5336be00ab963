// feed_command.cpp — `heft feed`: simulated checkweigher feeds for demos and tests.
//
// Writes the native CSV (time,line,head,weight) to a file, stdout or a TCP
// peer, optionally paced by the record times. Generation itself is the pure
// core (core/sim); this file only parses arguments and moves bytes.
#include <netdb.h>
#include <sys/socket.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <charconv>
#include <chrono>
#include <cmath>
#include <csignal>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <iostream>
#include <memory>
#include <optional>
#include <set>
#include <string>
#include <thread>
#include <utility>
#include <vector>

#include "command.h"
#include "core/record/native_record.h"
#include "core/sim/demo_scenarios.h"
#include "core/sim/feed_interleaver.h"

namespace heft::cli {
namespace {

constexpr std::size_t kChunkBytes = 64 * 1024;
// The latest time the native format can carry (a four-digit year).
constexpr std::int64_t kLatestTimeMs = 253402300799999;

const char kUsage[] =
    "usage: heft feed --scenario NAME[@LINE][,NAME[@LINE]...] [--line ID] [--seed N]\n"
    "                 [--packs N] [--start TIME] [--out FILE.csv | --tcp HOST:PORT]\n"
    "                 [--speed X] [--no-header] [--truth FILE.csv]\n"
    "       heft feed --list\n"
    "\n"
    "Simulated checkweigher feed in the native CSV format (time,line,head,weight).\n"
    "  --scenario   one or more named scenarios (see --list); several = several lines\n"
    "               interleaved in time order, each on its own line id (NAME@LINE picks it;\n"
    "               a scenario whose default line is taken moves to the next free one)\n"
    "  --line ID    the line for a single scenario (default: the scenario's own line)\n"
    "  --seed N     generator seed, default 1; same arguments give the same bytes\n"
    "  --packs N    packs per line (default: the scenario's length, mostly 3000)\n"
    "  --start T    time of the first pack, ISO-8601 UTC or epoch ms\n"
    "               (default 2026-03-02T06:00:00.000Z)\n"
    "  --out FILE   write to FILE ('-' = stdout, the default)\n"
    "  --tcp H:P    connect to H:P and stream the records\n"
    "  --speed X    pace records by their times divided by X (60 = a minute per second);\n"
    "               0 = as fast as possible. Default: 1 with --tcp, 0 otherwise\n"
    "  --no-header  leave out the header line\n"
    "  --truth FILE also write the truth per pack: conditions active, true mean and sd\n"
    "  --list       list the scenarios and plant lines\n"
    "Exit: 0 done, 2 usage, file or connection error.\n";

struct FeedOptions {
  std::vector<std::pair<std::string, std::string>> scenarios;  // name, line ("" = default)
  std::string line;
  std::uint64_t seed = 1;
  std::optional<std::int64_t> packs;
  std::int64_t start_ms = kDemoStartTimeMs;
  std::string out = "-";
  std::string tcp;
  std::optional<double> speed;
  bool header = true;
  std::string truth;
  bool list = false;
};

std::vector<std::string> SplitCommas(const std::string& text) {
  std::vector<std::string> parts;
  std::size_t begin = 0;
  while (true) {
    const std::size_t comma = text.find(',', begin);
    parts.push_back(text.substr(begin, comma - begin));
    if (comma == std::string::npos) break;
    begin = comma + 1;
  }
  return parts;
}

template <typename T>
bool ParseInteger(const std::string& text, T* value) {
  const char* end = text.data() + text.size();
  auto [ptr, ec] = std::from_chars(text.data(), end, *value);
  return ec == std::errc() && ptr == end && !text.empty();
}

bool ParseDouble(const std::string& text, double* value) {
  const char* end = text.data() + text.size();
  auto [ptr, ec] = std::from_chars(text.data(), end, *value);
  return ec == std::errc() && ptr == end && !text.empty() && std::isfinite(*value);
}

// Returns an error message, or "" when the arguments are fine.
std::string ParseOptions(const Args& args, FeedOptions* o, bool* help) {
  ArgReader reader(args);
  bool have_out = false;
  std::string value;
  while (!reader.Done()) {
    if (reader.Flag("--help") || reader.Flag("-h")) {
      *help = true;
      return "";
    } else if (reader.Flag("--list")) {
      o->list = true;
    } else if (reader.Flag("--no-header")) {
      o->header = false;
    } else if (reader.Option("--scenario", &value)) {
      for (const std::string& item : SplitCommas(value)) {
        const std::size_t at = item.find('@');
        std::string name = item.substr(0, at);
        std::string line = at == std::string::npos ? "" : item.substr(at + 1);
        if (name.empty()) return "--scenario: empty scenario name in '" + value + "'";
        if (at != std::string::npos && line.empty()) {
          return "--scenario: '" + item + "' has an empty line after '@'";
        }
        o->scenarios.emplace_back(std::move(name), std::move(line));
      }
    } else if (reader.Option("--line", &value)) {
      o->line = value;
    } else if (reader.Option("--seed", &value)) {
      if (!ParseInteger(value, &o->seed)) {
        return "--seed: '" + value + "' is not a non-negative integer below 2^64";
      }
    } else if (reader.Option("--packs", &value)) {
      std::int64_t packs = 0;
      if (!ParseInteger(value, &packs) || packs < 1 || packs > 1000000000) {
        return "--packs: '" + value + "' is not a whole number in 1..1000000000";
      }
      o->packs = packs;
    } else if (reader.Option("--start", &value)) {
      const auto ms = ParseTimeMs(value);
      if (!ms) return "--start: '" + value + "' is not ISO-8601 UTC or epoch milliseconds";
      o->start_ms = *ms;
    } else if (reader.Option("--out", &value)) {
      if (value.empty()) return "--out: empty file name";
      o->out = value;
      have_out = true;
    } else if (reader.Option("--tcp", &value)) {
      o->tcp = value;
    } else if (reader.Option("--speed", &value)) {
      double speed = 0;
      if (!ParseDouble(value, &speed) || speed < 0) {
        return "--speed: '" + value + "' is not a number >= 0";
      }
      o->speed = speed;
    } else if (reader.Option("--truth", &value)) {
      if (value.empty()) return "--truth: empty file name";
      o->truth = value;
    } else {
      if (!reader.error.empty()) return reader.error;
      return "unknown argument '" + reader.Peek() + "'";
    }
  }
  if (o->list) return "";
  if (o->scenarios.empty()) return "--scenario is required (see --list)";
  if (have_out && !o->tcp.empty()) return "--out and --tcp cannot be used together";
  if (!o->line.empty()) {
    if (o->scenarios.size() != 1) {
      return "--line only works with one scenario; write NAME@LINE for several";
    }
    if (!o->scenarios[0].second.empty()) {
      return "--line and NAME@LINE both given; use one";
    }
    o->scenarios[0].second = o->line;
  }
  if (o->truth == "-" || (!o->truth.empty() && o->truth == o->out)) {
    return "--truth needs its own file (not stdout, not the --out file)";
  }
  return "";
}

void PrintList(std::ostream& out) {
  out << "scenarios (heft feed --scenario NAME[@LINE]):\n";
  for (const auto& s : DemoScenarios()) {
    std::string name(s.name);
    std::string line(s.default_line);
    name.resize(std::max<std::size_t>(name.size(), 12), ' ');
    line.resize(std::max<std::size_t>(line.size(), 8), ' ');
    out << "  " << name << " " << line << " " << s.description << "\n";
  }
  out << "lines (Millbrook Oat Co.): oats-1 500 g oats, 12 heads; oats-2 1000 g oats, 12 heads;"
         " honey-2 340 g jars, 4 heads\n";
}

// Where the bytes go: an ostream (file or stdout) or a connected socket.
class Sink {
 public:
  virtual ~Sink() = default;
  // Empty string on success, else why not.
  virtual std::string Write(const std::string& bytes) = 0;
};

class StreamSink : public Sink {
 public:
  StreamSink(std::ostream* stream, std::string name) : stream_(stream), name_(std::move(name)) {}
  std::string Write(const std::string& bytes) override {
    stream_->write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
    stream_->flush();
    if (!*stream_) return "cannot write " + name_ + ": " + std::strerror(errno);
    return "";
  }

 private:
  std::ostream* stream_;
  std::string name_;
};

class SocketSink : public Sink {
 public:
  SocketSink(int fd, std::string peer) : fd_(fd), peer_(std::move(peer)) {}
  ~SocketSink() override {
    ::shutdown(fd_, SHUT_WR);
    ::close(fd_);
  }
  std::string Write(const std::string& bytes) override {
    std::size_t done = 0;
    while (done < bytes.size()) {
      const ssize_t n = ::send(fd_, bytes.data() + done, bytes.size() - done, MSG_NOSIGNAL);
      if (n < 0) {
        if (errno == EINTR) continue;
        if (errno == EPIPE || errno == ECONNRESET) {
          return "connection to " + peer_ + " closed by the peer (" + std::strerror(errno) + ")";
        }
        return "sending to " + peer_ + " failed: " + std::strerror(errno);
      }
      done += static_cast<std::size_t>(n);
    }
    return "";
  }

 private:
  int fd_;
  std::string peer_;
};

// Connects to HOST:PORT ([v6addr]:PORT also accepted); fd or -1 and *error.
int ConnectTcp(const std::string& target, std::string* error) {
  const std::size_t colon = target.rfind(':');
  if (colon == std::string::npos || colon == 0 || colon + 1 == target.size()) {
    *error = "--tcp: '" + target + "' is not HOST:PORT";
    return -1;
  }
  std::string host = target.substr(0, colon);
  const std::string port = target.substr(colon + 1);
  if (host.size() >= 2 && host.front() == '[' && host.back() == ']') {
    host = host.substr(1, host.size() - 2);
  }
  int port_number = 0;
  if (!ParseInteger(port, &port_number) || port_number < 1 || port_number > 65535) {
    *error = "--tcp: port '" + port + "' is not in 1..65535";
    return -1;
  }
  addrinfo hints{};
  hints.ai_family = AF_UNSPEC;
  hints.ai_socktype = SOCK_STREAM;
  addrinfo* found = nullptr;
  const int rc = ::getaddrinfo(host.c_str(), port.c_str(), &hints, &found);
  if (rc != 0) {
    *error = "cannot resolve " + host + ": " + ::gai_strerror(rc);
    return -1;
  }
  int fd = -1;
  int last_errno = 0;
  for (addrinfo* a = found; a != nullptr; a = a->ai_next) {
    fd = ::socket(a->ai_family, a->ai_socktype, a->ai_protocol);
    if (fd < 0) {
      last_errno = errno;
      continue;
    }
    if (::connect(fd, a->ai_addr, a->ai_addrlen) == 0) break;
    last_errno = errno;
    ::close(fd);
    fd = -1;
  }
  ::freeaddrinfo(found);
  if (fd < 0) *error = "cannot connect to " + target + ": " + std::strerror(last_errno);
  return fd;
}

void AppendRecord(std::string* buffer, const InterleavedPack& p, const std::string& line) {
  char time_text[32];
  FormatTimeMs(p.generated.pack.time_ms, time_text);
  char tail[64];
  std::snprintf(tail, sizeof tail, ",%d,%.1f\n", p.generated.pack.head, p.generated.pack.grams);
  buffer->append(time_text);
  buffer->push_back(',');
  buffer->append(line);
  buffer->append(tail);
}

void AppendTruth(std::string* buffer, std::int64_t record, const InterleavedPack& p,
                 const ScenarioSpec& spec) {
  const GeneratedPack& g = p.generated;
  char time_text[32];
  FormatTimeMs(g.pack.time_ms, time_text);
  std::string labels;
  for (std::size_t k = 0; k < spec.conditions.size(); ++k) {
    if (!g.Active(k)) continue;
    if (!labels.empty()) labels.push_back('+');
    labels.append(ConditionKindName(spec.conditions[k].kind));
  }
  char row[256];
  std::snprintf(row, sizeof row, "%lld,%s,%s,%lld,%d,%.1f,%.3f,%.3f,%d,",
                static_cast<long long>(record), time_text, spec.line_id.c_str(),
                static_cast<long long>(g.pack.index), g.pack.head, g.pack.grams, g.true_mean_grams,
                g.true_sigma_grams, g.gross ? 1 : 0);
  buffer->append(row);
  buffer->append(labels);
  buffer->push_back('\n');
}

int RunFeed(const Args& args, std::ostream& out, std::ostream& err) {
  FeedOptions o;
  bool help = false;
  const std::string problem = ParseOptions(args, &o, &help);
  if (help) {
    out << kUsage;
    return 0;
  }
  if (!problem.empty()) {
    err << "heft feed: " << problem << "\n" << kUsage;
    return 2;
  }
  if (o.list) {
    PrintList(out);
    return 0;
  }

  // Lines named with NAME@LINE (or --line) are fixed; a scenario left on its default
  // line moves to the next free plant line if that one is taken, so that
  // `--scenario step,stop` works (each scenario needs its own line).
  std::set<std::string> taken;
  for (const auto& [name, line] : o.scenarios) {
    if (line.empty()) continue;
    if (!taken.insert(line).second) {
      err << "heft feed: line " << line << " is given to two scenarios\n";
      return 2;
    }
  }
  FeedInterleaver feed;
  for (auto& [name, line] : o.scenarios) {
    if (line.empty()) {
      const auto& all = DemoScenarios();
      const auto info = std::find_if(all.begin(), all.end(),
                                     [&](const DemoScenarioInfo& s) { return s.name == name; });
      std::string chosen = info == all.end() ? "" : std::string(info->default_line);
      if (!chosen.empty() && taken.count(chosen) != 0) {
        const std::string wanted = chosen;
        chosen.clear();
        for (std::string_view id : DemoLines()) {
          if (taken.count(std::string(id)) == 0) {
            chosen = std::string(id);
            break;
          }
        }
        for (int n = 2; chosen.empty(); ++n) {
          const std::string id = wanted + "." + std::to_string(n);
          if (taken.count(id) == 0) chosen = id;
        }
        err << "heft feed: " << name << " runs on line " << chosen << " (" << wanted
            << " is taken)\n";
      }
      line = chosen;
      if (!line.empty()) taken.insert(line);
    }
    ScenarioSpec spec;
    const Status status = MakeDemoScenario(name, line, o.seed, &spec);
    if (!status.ok()) {
      err << "heft feed: --scenario " << name << ": " << status.message() << "\n";
      return 2;
    }
    spec.start_time_ms = o.start_ms;
    const std::int64_t packs = o.packs.value_or(spec.default_packs);
    feed.Add(std::move(spec), packs);
  }

  std::signal(SIGPIPE, SIG_IGN);  // a closed peer must give EPIPE, not kill us
  std::unique_ptr<Sink> sink;
  std::ofstream file;
  std::string where;
  if (!o.tcp.empty()) {
    std::string error;
    const int fd = ConnectTcp(o.tcp, &error);
    if (fd < 0) {
      err << "heft feed: " << error << "\n";
      return 2;
    }
    where = o.tcp;
    sink = std::make_unique<SocketSink>(fd, o.tcp);
  } else if (o.out == "-") {
    where = "stdout";
    sink = std::make_unique<StreamSink>(&out, "stdout");
  } else {
    file.open(o.out, std::ios::binary | std::ios::trunc);
    if (!file) {
      err << "heft feed: cannot open " << o.out << " for writing: " << std::strerror(errno) << "\n";
      return 2;
    }
    where = o.out;
    sink = std::make_unique<StreamSink>(&file, o.out);
  }
  std::ofstream truth_file;
  if (!o.truth.empty()) {
    truth_file.open(o.truth, std::ios::binary | std::ios::trunc);
    if (!truth_file) {
      err << "heft feed: cannot open " << o.truth << " for writing: " << std::strerror(errno)
          << "\n";
      return 2;
    }
    truth_file << "record,time,line,index,head,weight,true_mean,true_sigma,gross,conditions\n";
  }

  const double speed = o.speed.value_or(o.tcp.empty() ? 0.0 : 1.0);
  const auto wall_start = std::chrono::steady_clock::now();
  std::string buffer;
  std::string truth_buffer;
  buffer.reserve(kChunkBytes + 256);
  if (o.header) buffer.append("time,line,head,weight\n");
  std::int64_t buffered = 0;
  std::int64_t sent = 0;
  std::int64_t record = 0;
  std::optional<std::int64_t> first_ms;

  auto flush = [&]() -> bool {
    if (!buffer.empty()) {
      const std::string failure = sink->Write(buffer);
      if (!failure.empty()) {
        err << "heft feed: " << failure << " after " << sent << " records\n";
        return false;
      }
      buffer.clear();
    }
    sent += buffered;
    buffered = 0;
    if (!truth_buffer.empty()) {
      truth_file.write(truth_buffer.data(), static_cast<std::streamsize>(truth_buffer.size()));
      truth_buffer.clear();
      if (!truth_file) {
        err << "heft feed: cannot write " << o.truth << ": " << std::strerror(errno) << "\n";
        return false;
      }
    }
    return true;
  };

  InterleavedPack p;
  while (feed.Next(&p)) {
    const std::int64_t t = p.generated.pack.time_ms;
    if (t > kLatestTimeMs) {
      flush();
      err << "heft feed: pack " << p.generated.pack.index << " of " << feed.spec(p.source).line_id
          << " would be stamped after 9999-12-31T23:59:59.999Z; use an earlier --start\n";
      return 2;
    }
    if (!first_ms) first_ms = t;
    if (speed > 0) {
      const auto due = wall_start + std::chrono::duration_cast<std::chrono::steady_clock::duration>(
                                        std::chrono::duration<double, std::milli>(
                                            static_cast<double>(t - *first_ms) / speed));
      if (due > std::chrono::steady_clock::now()) {
        if (!flush()) return 2;
        std::this_thread::sleep_until(due);
      }
    }
    const ScenarioSpec& spec = feed.spec(p.source);
    AppendRecord(&buffer, p, spec.line_id);
    if (!o.truth.empty()) AppendTruth(&truth_buffer, record, p, spec);
    ++buffered;
    ++record;
    if (buffer.size() >= kChunkBytes && !flush()) return 2;
  }
  if (!flush()) return 2;
  if (truth_file.is_open()) {
    truth_file.close();
    if (!truth_file) {
      err << "heft feed: cannot finish writing " << o.truth << "\n";
      return 2;
    }
  }
  if (file.is_open()) {
    file.close();
    if (!file) {
      err << "heft feed: cannot finish writing " << o.out << "\n";
      return 2;
    }
  }
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - wall_start).count();
  sink.reset();  // closes the connection
  if (where != "stdout") {
    char secs[32];
    std::snprintf(secs, sizeof secs, "%.2f", seconds);
    err << "heft feed: " << (o.tcp.empty() ? "wrote " : "sent ") << sent << " records to " << where
        << " in " << secs << " s\n";
  }
  return 0;
}

}  // namespace

HEFT_COMMAND("feed", "simulated checkweigher feed (demo scenarios) to a file or TCP", RunFeed);

}  // namespace heft::cli
