// heft — the engineer's command-line tool: thin subcommands over libheft.
#include <algorithm>
#include <cstring>
#include <iostream>
#include <string>

#include "command.h"

#include <charconv>

#include "core/record/native_record.h"

namespace heft::cli {

namespace {
std::vector<Command>& Registry() {
  static std::vector<Command> commands;
  return commands;
}
}  // namespace

bool RegisterCommand(const Command& command) {
  Registry().push_back(command);
  return true;
}

const std::vector<Command>& Commands() {
  auto& commands = Registry();
  std::sort(commands.begin(), commands.end(),
            [](const Command& a, const Command& b) { return std::strcmp(a.name, b.name) < 0; });
  return commands;
}

bool ArgReader::Option(const std::string& name, std::string* value) {
  if (Done()) return false;
  const std::string& arg = args_[pos_];
  if (arg == name) {
    if (pos_ + 1 >= args_.size()) {
      error = name + " needs a value";
      ++pos_;
      return false;
    }
    *value = args_[pos_ + 1];
    pos_ += 2;
    return true;
  }
  if (arg.size() > name.size() && arg.compare(0, name.size(), name) == 0 &&
      arg[name.size()] == '=') {
    *value = arg.substr(name.size() + 1);
    ++pos_;
    return true;
  }
  return false;
}

bool ArgReader::Flag(const std::string& name) {
  if (Done() || args_[pos_] != name) return false;
  ++pos_;
  return true;
}

bool ParseTimeOption(const std::string& option, const std::string& text,
                     std::optional<std::int64_t>* out, std::string* error) {
  *out = ParseTimeMs(text);
  if (*out) return true;
  *error = option + " '" + text +
           "' is not a time (ISO-8601 UTC like 2026-03-02T06:00:00Z, or epoch ms)";
  return false;
}

bool ParseLimitOption(const std::string& text, std::size_t* out, std::string* error) {
  std::uint64_t limit = 0;
  const char* end = text.data() + text.size();
  const auto [ptr, ec] = std::from_chars(text.data(), end, limit);
  if (text.empty() || ec != std::errc() || ptr != end) {
    *error = "--limit '" + text + "' is not a non-negative whole number";
    return false;
  }
  *out = static_cast<std::size_t>(limit);
  return true;
}

bool ParseFormatOption(const std::string& text, OutputFormat* out, std::string* error) {
  if (text.empty() || text == "table") {
    *out = OutputFormat::kTable;
  } else if (text == "csv") {
    *out = OutputFormat::kCsv;
  } else if (text == "json") {
    *out = OutputFormat::kJson;
  } else {
    *error = "unknown --format '" + text + "' (valid: table, csv, json)";
    return false;
  }
  return true;
}

}  // namespace heft::cli

namespace {
void Usage(std::ostream& out) {
  out << "usage: heft COMMAND [ARGS]\n\ncommands:\n";
  for (const auto& c : heft::cli::Commands()) {
    out << "  " << c.name << std::string(10 - std::min<std::size_t>(9, std::strlen(c.name)), ' ')
        << c.summary << "\n";
  }
  out << "\n`heft COMMAND --help` describes one command.\n";
}
}  // namespace

int main(int argc, char** argv) {
  if (argc < 2 || std::strcmp(argv[1], "--help") == 0 || std::strcmp(argv[1], "-h") == 0) {
    Usage(argc < 2 ? std::cerr : std::cout);
    return argc < 2 ? 2 : 0;
  }
  const std::string name = argv[1];
  for (const auto& c : heft::cli::Commands()) {
    if (name == c.name) {
      heft::cli::Args args(argv + 2, argv + argc);
      try {
        return c.run(args, std::cout, std::cerr);
      } catch (const std::exception& e) {
        std::cerr << "heft " << name << ": " << e.what() << "\n";
        return 2;
      }
    }
  }
  std::cerr << "heft: unknown command '" << name << "'\n";
  Usage(std::cerr);
  return 2;
}
