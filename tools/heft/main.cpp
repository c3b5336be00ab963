// heft — the engineer's command-line tool: thin subcommands over libheft.
#include <algorithm>
#include <cstring>
#include <iostream>
#include <string>

#include "command.h"

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
