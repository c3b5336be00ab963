// heftd — the heft monitor daemon: ingests checkweigher feeds over TCP,
// watches every line and stores events and raw samples in SQLite.
//
//   heftd --config FILE [--db PATH] [--port N] [--check-config] [--foreground]
//
// Exit status: 0 after an orderly shutdown (SIGINT/SIGTERM) or a good
// --check-config; 1 on an unexpected failure while running (so a supervisor
// restarts it) or a second signal during shutdown; 2 on a usage, config or
// startup error (database cannot open, port in use).
#include <sys/stat.h>

#include <cerrno>
#include <cstdio>
#include <cstdlib>
#include <exception>
#include <iostream>
#include <memory>
#include <string>
#include <vector>

#include <spdlog/pattern_formatter.h>
#include <spdlog/sinks/rotating_file_sink.h>
#include <spdlog/sinks/stdout_color_sinks.h>
#include <spdlog/spdlog.h>

#include "clock.h"
#include "daemon.h"
#include "io/config_loader.h"

namespace {

constexpr int kExitFailure = 1;
constexpr int kExitStartup = 2;
constexpr std::size_t kLogFileBytes = 10 * 1024 * 1024;  // rotate at 10 MiB
constexpr std::size_t kLogFiles = 5;                     // keep 5 old files

struct Options {
  std::string config;
  std::string db;
  int port = -1;  // -1 = from the config
  bool check_config = false;
};

void Usage(std::ostream& out) {
  out << "usage: heftd --config FILE [--db PATH] [--port N] [--check-config] [--foreground]\n"
         "  --config FILE   YAML configuration (required)\n"
         "  --db PATH       database file (overrides storage.database)\n"
         "  --port N        TCP port for feeds (overrides listen.port; 0 = any free port)\n"
         "  --check-config  validate the configuration, print \"config OK\" or the errors, exit\n"
         "  --foreground    accepted for service managers; heftd never detaches\n";
}

// Returns false (with *error set) on a usage error.
bool ParseArgs(int argc, char** argv, Options* options, std::string* error, bool* help) {
  for (int i = 1; i < argc; ++i) {
    const std::string arg = argv[i];
    auto value = [&](std::string* out) {
      const std::size_t eq = arg.find('=');
      if (eq != std::string::npos) {
        *out = arg.substr(eq + 1);
        return true;
      }
      if (i + 1 >= argc) {
        *error = arg + " needs a value";
        return false;
      }
      *out = argv[++i];
      return true;
    };
    const std::string name = arg.substr(0, arg.find('='));
    if (name == "--help" || name == "-h") {
      *help = true;
      return true;
    } else if (name == "--config") {
      if (!value(&options->config)) return false;
    } else if (name == "--db") {
      if (!value(&options->db)) return false;
    } else if (name == "--port") {
      std::string text;
      if (!value(&text)) return false;
      char* end = nullptr;
      errno = 0;
      const long port = std::strtol(text.c_str(), &end, 10);
      if (text.empty() || *end != '\0' || errno != 0 || port < 0 || port > 65535) {
        *error = "--port: \"" + text + "\" is not a port number 0..65535";
        return false;
      }
      options->port = static_cast<int>(port);
    } else if (name == "--check-config" && name == arg) {
      options->check_config = true;
    } else if (name == "--foreground" && name == arg) {
      // heftd always runs in the foreground (systemd Type=notify style).
    } else {
      *error = "unknown argument \"" + arg + "\"";
      return false;
    }
  }
  if (options->config.empty()) {
    *error = "--config FILE is required";
    return false;
  }
  return true;
}

// `<N>` at the start of a line: its syslog priority for journald (sd-daemon(3);
// operations.md §3.5, §3.6), so `journalctl -p warning` finds heftd's warnings.
class JournalPriorityFlag final : public spdlog::custom_flag_formatter {
 public:
  void format(const spdlog::details::log_msg& msg, const std::tm&,
              spdlog::memory_buf_t& dest) override {
    char priority = '6';  // info
    switch (msg.level) {
      case spdlog::level::trace:
      case spdlog::level::debug:
        priority = '7';
        break;
      case spdlog::level::warn:
        priority = '4';
        break;
      case spdlog::level::err:
        priority = '3';
        break;
      case spdlog::level::critical:
        priority = '2';
        break;
      default:
        break;
    }
    const char text[] = {'<', priority, '>'};
    dest.append(text, text + 3);
  }
  std::unique_ptr<custom_flag_formatter> clone() const override {
    return std::make_unique<JournalPriorityFlag>();
  }
};

// True when stderr is the journal stream systemd gave us ($JOURNAL_STREAM is
// "device:inode" of it; systemd.exec(5)).
bool StderrIsJournal() {
  const char* stream = std::getenv("JOURNAL_STREAM");
  if (stream == nullptr) return false;
  struct stat st = {};
  if (::fstat(2, &st) != 0) return false;
  unsigned long long device = 0, inode = 0;
  if (std::sscanf(stream, "%llu:%llu", &device, &inode) != 2) return false;
  return device == static_cast<unsigned long long>(st.st_dev) &&
         inode == static_cast<unsigned long long>(st.st_ino);
}

// Console sink on stderr, plus a rotating file when log.file is set. Throws
// spdlog::spdlog_ex when the file cannot be opened. Under systemd (stderr is
// the journal) console lines carry a `<N>` priority and no timestamp, which
// journald adds itself.
void SetUpLogging(const heft::LogSettings& log) {
  std::vector<spdlog::sink_ptr> sinks;
  sinks.push_back(std::make_shared<spdlog::sinks::stderr_color_sink_st>());
  if (!log.file.empty()) {
    sinks.push_back(
        std::make_shared<spdlog::sinks::rotating_file_sink_st>(log.file, kLogFileBytes, kLogFiles));
  }
  auto logger = std::make_shared<spdlog::logger>("heftd", sinks.begin(), sinks.end());
  spdlog::level::level_enum level = spdlog::level::from_str(log.level);
  const bool known = level != spdlog::level::off || log.level == "off";
  if (!known) level = spdlog::level::info;
  logger->set_level(level);
  logger->set_pattern("%Y-%m-%dT%H:%M:%S.%eZ %l %v", spdlog::pattern_time_type::utc);
  if (StderrIsJournal()) {
    auto journal = std::make_unique<spdlog::pattern_formatter>();
    journal->add_flag<JournalPriorityFlag>('*').set_pattern("%*%l %v");
    sinks.front()->set_formatter(std::move(journal));
  }
  logger->flush_on(spdlog::level::info);  // heftd logs transitions and faults only: few lines
  spdlog::set_default_logger(logger);
  if (!known) spdlog::warn("log.level \"{}\" not known; using info", log.level);
}

int RunDaemon(const Options& options) {
  heft::Config config;
  std::vector<std::string> errors;
  const heft::Status loaded = heft::LoadConfigFile(options.config, &config, &errors);
  if (options.check_config) {
    if (loaded.ok()) {
      std::cout << "config OK\n";
      return 0;
    }
    if (errors.empty()) errors.push_back(loaded.message());
    for (const auto& line : errors) std::cerr << line << "\n";
    return kExitStartup;
  }
  if (!loaded.ok()) {
    if (errors.empty()) errors.push_back(loaded.message());
    for (const auto& line : errors) std::cerr << "heftd: " << line << "\n";
    return kExitStartup;
  }
  if (!options.db.empty()) config.storage.database = options.db;
  if (options.port >= 0) config.listen.port = options.port;

  try {
    SetUpLogging(config.log);
  } catch (const spdlog::spdlog_ex& e) {
    std::cerr << "heftd: cannot open log file " << config.log.file << ": " << e.what() << "\n";
    return kExitStartup;
  }

  heft::SystemClock clock;
  heft::Daemon daemon(std::move(config), clock);
  daemon.SetOverrides({options.db, options.port});  // they win on SIGHUP reload too
  const heft::Status started = daemon.Start();
  if (!started.ok()) {
    spdlog::error("startup failed: {}", started.message());
    return kExitStartup;
  }
  daemon.Run();
  return 0;
}

}  // namespace

int main(int argc, char** argv) {
  Options options;
  std::string error;
  bool help = false;
  if (!ParseArgs(argc, argv, &options, &error, &help)) {
    std::cerr << "heftd: " << error << "\n";
    Usage(std::cerr);
    return kExitStartup;
  }
  if (help) {
    Usage(std::cout);
    return 0;
  }
  try {
    return RunDaemon(options);
  } catch (const std::exception& e) {
    spdlog::critical("heftd failed: {}", e.what());
    spdlog::default_logger()->flush();
    return kExitFailure;
  } catch (...) {
    spdlog::critical("heftd failed: unknown exception");
    return kExitFailure;
  }
}
