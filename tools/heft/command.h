// command.h — how a `heft` subcommand plugs into the tool.
//
// Each subcommand lives in its own file and registers itself with
// HEFT_COMMAND(name, summary, function). Subcommands are thin: parse
// arguments, call the library, write to the given streams.
// Exit codes: 0 success, 1 a finding the caller asked about, 2 usage/file/config error.
#pragma once

#include <cstddef>
#include <cstdint>
#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

namespace heft::cli {

using Args = std::vector<std::string>;  // arguments after the subcommand name
using CommandFn = int (*)(const Args& args, std::ostream& out, std::ostream& err);

struct Command {
  const char* name;
  const char* summary;
  CommandFn run;
};

// Registers at static-initialisation time; returns true so it can seed a static.
bool RegisterCommand(const Command& command);
const std::vector<Command>& Commands();

// Small argument helpers shared by the subcommands.
class ArgReader {
 public:
  explicit ArgReader(const Args& args) : args_(args) {}
  // True and sets *value if `--name VALUE` (or `--name=VALUE`) is next.
  bool Option(const std::string& name, std::string* value);
  bool Flag(const std::string& name);
  bool Done() const { return pos_ >= args_.size(); }
  const std::string& Peek() const { return args_[pos_]; }
  std::string Take() { return args_[pos_++]; }
  std::string error;  // set when an option lacks its value

 private:
  const Args& args_;
  std::size_t pos_ = 0;
};

// How a query command prints: aligned columns for people, CSV or JSON lines for scripts.
enum class OutputFormat { kTable, kCsv, kJson };

// Option values shared by the query commands. Each returns false and sets
// *error to a one-line reason naming the option when `text` is not valid.
bool ParseTimeOption(const std::string& option, const std::string& text,
                     std::optional<std::int64_t>* out, std::string* error);
bool ParseLimitOption(const std::string& text, std::size_t* out, std::string* error);
bool ParseFormatOption(const std::string& text, OutputFormat* out, std::string* error);

}  // namespace heft::cli

#define HEFT_COMMAND_CONCAT2(a, b) a##b
#define HEFT_COMMAND_CONCAT(a, b) HEFT_COMMAND_CONCAT2(a, b)
#define HEFT_COMMAND(name, summary, fn)                                       \
  static const bool HEFT_COMMAND_CONCAT(heft_command_registered_, __LINE__) = \
      ::heft::cli::RegisterCommand({name, summary, fn})
