// history_cli.cpp — shared options and output for the history commands.
#include "history_cli.h"

#include <time.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <ostream>

#include <fmt/core.h>

#include "core/chart/nice_ticks.h"
#include "core/record/native_record.h"

namespace heft::cli {
namespace fs = std::filesystem;

std::optional<int> ReadHistoryArgs(const Args& args, const char* command, const char* usage,
                                   bool need_line, std::ostream& out, std::ostream& err,
                                   HistoryOptions* options) {
  const auto fail = [&](const std::string& message) {
    err << "heft " << command << ": " << message << "\n";
    return 2;
  };
  const std::string see = std::string(" (see heft ") + command + " --help)";
  ArgReader reader(args);
  while (!reader.Done()) {
    std::string error;
    if (reader.Flag("--help") || reader.Flag("-h")) {
      out << usage;
      return 0;
    }
    if (TakeHistoryOption(reader, options, &error)) {
      if (!error.empty()) return fail(error);
      continue;
    }
    if (!reader.error.empty()) return fail(reader.error);
    return fail("unexpected argument '" + reader.Peek() + "'" + see);
  }
  if (options->db.empty()) return fail("--db FILE is required" + see);
  if (need_line && options->line.empty()) return fail("--line L is required" + see);
  return std::nullopt;
}

bool TakeHistoryOption(ArgReader& reader, HistoryOptions* options, std::string* error) {
  std::string value;
  const auto time_option = [&](const char* name, std::optional<std::int64_t>* out) {
    if (!reader.Option(name, &value)) return false;
    ParseTimeOption(name, value, out, error);
    return true;
  };
  if (reader.Option("--db", &value)) {
    options->db = value;
    return true;
  }
  if (reader.Option("--line", &value)) {
    options->line = value;
    return true;
  }
  if (time_option("--from", &options->from_ms) || time_option("--to", &options->to_ms)) {
    return true;
  }
  if (reader.Option("--rules", &value)) {
    options->rules = value;
    return true;
  }
  if (reader.Option("--format", &value)) {
    ParseFormatOption(value, &options->format, error);
    return true;
  }
  if (reader.Flag("--local")) {
    options->local = true;
    return true;
  }
  if (reader.Flag("--utc")) {
    options->local = false;
    return true;
  }
  return false;
}

int DisplayOffsetMinutes(bool local) {
  if (!local) return 0;
  const time_t now = ::time(nullptr);
  struct tm parts;
  if (::localtime_r(&now, &parts) == nullptr) return 0;
  return static_cast<int>(parts.tm_gmtoff / 60);
}

std::string ZoneName(bool local) {
  if (!local) return "UTC";
  const int offset = DisplayOffsetMinutes(true);
  const int a = std::abs(offset);
  return fmt::format("local, UTC{}{:02}:{:02}", offset < 0 ? '-' : '+', a / 60, a % 60);
}

std::string DisplayTime(std::int64_t time_ms, bool local, bool iso) {
  if (iso && !local) {
    char buffer[32];
    FormatTimeMs(time_ms, buffer);
    return buffer;
  }
  return chart::FormatDateTime(time_ms, DisplayOffsetMinutes(local), true);
}

std::string FindRulesFile(const std::string& given) {
  std::error_code ec;
  if (!given.empty() && fs::is_regular_file(given, ec)) return given;
  if (!given.empty() && given.find('/') != std::string::npos) return {};
  std::string name = given.empty() ? "eu-average-quantity.yaml" : given;
  if (name.size() < 5 || name.compare(name.size() - 5, 5, ".yaml") != 0) name += ".yaml";
  std::vector<fs::path> dirs;
  if (const char* env = std::getenv("HEFT_RULES_DIR"); env && *env) dirs.emplace_back(env);
  const fs::path exe = fs::read_symlink("/proc/self/exe", ec);
  if (!ec) {
    for (const char* rel : {"../config/rules", "../../config/rules", "../share/heft/rules"}) {
      dirs.push_back(exe.parent_path() / rel);
    }
  }
  dirs.emplace_back("config/rules");
  for (const fs::path& dir : dirs) {
    const fs::path candidate = dir / name;
    if (fs::is_regular_file(candidate, ec)) return candidate.lexically_normal().string();
  }
  return {};
}

void WriteTable(std::ostream& out, const std::vector<std::string>& header,
                const std::vector<std::vector<std::string>>& rows,
                const std::vector<bool>& numeric) {
  std::vector<std::size_t> width(header.size());
  for (std::size_t c = 0; c < header.size(); ++c) width[c] = header[c].size();
  for (const auto& row : rows) {
    for (std::size_t c = 0; c < row.size() && c < width.size(); ++c) {
      width[c] = std::max(width[c], row[c].size());
    }
  }
  const auto write = [&](const std::vector<std::string>& row) {
    std::string text;
    for (std::size_t c = 0; c < row.size() && c < width.size(); ++c) {
      const std::string pad(width[c] - row[c].size(), ' ');
      const bool right = c < numeric.size() && numeric[c];
      text += right ? pad + row[c] : row[c] + pad;
      text += "  ";
    }
    while (!text.empty() && text.back() == ' ') text.pop_back();
    out << text << "\n";
  };
  write(header);
  for (const auto& row : rows) write(row);
}

std::string CsvField(const std::string& text) {
  if (text.find_first_of(",\"\r\n") == std::string::npos) return text;
  std::string out = "\"";
  for (char c : text) {
    if (c == '"') out += '"';
    out += c;
  }
  return out + '"';
}

void WriteCsv(std::ostream& out, const std::vector<std::string>& header,
              const std::vector<std::vector<std::string>>& rows) {
  const auto write = [&](const std::vector<std::string>& row) {
    for (std::size_t c = 0; c < row.size(); ++c) {
      if (c > 0) out << ',';
      out << CsvField(row[c]);
    }
    out << "\n";
  };
  write(header);
  for (const auto& row : rows) write(row);
}

}  // namespace heft::cli
