// rule_table_finder.cpp — rule table look-up and loading for plant settings.
#include "io/rule_table_finder.h"

#include <cstdlib>
#include <filesystem>
#include <memory>
#include <utility>

#include <fmt/format.h>

#include "core/comply/net_content_limits.h"
#include "io/rule_table_loader.h"

namespace heft {
namespace {

namespace fs = std::filesystem;

std::vector<fs::path> RulesDirs() {
  std::vector<fs::path> dirs;
  if (const char* env = std::getenv("HEFT_RULES_DIR"); env != nullptr && *env != '\0') {
    dirs.emplace_back(env);
  }
  std::error_code ec;
  const fs::path exe = fs::read_symlink("/proc/self/exe", ec);
  if (!ec) {
    const fs::path bin = exe.parent_path();
    // Build trees put programs in <build>/<dir>; installs in <prefix>/bin.
    for (const char* rel : {"../config/rules", "../../config/rules", "../../../config/rules",
                            "../share/heft/rules"}) {
      dirs.push_back(bin / rel);
    }
  }
  dirs.emplace_back("config/rules");
  dirs.emplace_back("../config/rules");
  return dirs;
}

}  // namespace

std::optional<std::string> FindRuleTableFile(const std::string& rules, const std::string& base_dir,
                                             std::vector<std::string>* tried) {
  std::error_code ec;
  auto note = [&](const fs::path& p) {
    if (tried != nullptr) tried->push_back(p.lexically_normal().string());
  };
  if (rules.empty()) return std::nullopt;
  const fs::path given(rules);
  std::vector<fs::path> direct;
  if (given.is_relative() && !base_dir.empty()) direct.push_back(fs::path(base_dir) / given);
  direct.push_back(given);
  for (const fs::path& p : direct) {
    if (fs::is_regular_file(p, ec)) return fs::weakly_canonical(p, ec).string();
    note(p);
  }
  if (rules.find('/') != std::string::npos) return std::nullopt;
  std::vector<std::string> names = {rules};
  if (rules.size() < 5 || rules.compare(rules.size() - 5, 5, ".yaml") != 0) {
    names.push_back(rules + ".yaml");
  }
  for (const fs::path& dir : RulesDirs()) {
    for (const std::string& name : names) {
      const fs::path candidate = dir / name;
      if (fs::is_regular_file(candidate, ec)) return fs::weakly_canonical(candidate, ec).string();
      note(candidate);
    }
  }
  return std::nullopt;
}

Status ResolveLineRules(LineSettings* line, const std::string& base_dir, PlantSettings* plant) {
  if (line->rules == "none") return Status::Ok();
  if (plant->rule_tables.find(line->rules) == plant->rule_tables.end()) {
    std::vector<std::string> tried;
    const std::optional<std::string> path = FindRuleTableFile(line->rules, base_dir, &tried);
    if (!path) {
      std::string where;
      for (std::size_t i = 0; i < tried.size() && i < 4; ++i) {
        where += (i > 0 ? ", " : "") + tried[i];
      }
      if (tried.size() > 4) where += fmt::format(" and {} more", tried.size() - 4);
      return Status::Error(fmt::format(
          "rule table \"{}\" not found (looked at {}); give a file path, set HEFT_RULES_DIR, "
          "or rules: none for no compliance accounting",
          line->rules, where));
    }
    if (plant->rule_tables.find(*path) == plant->rule_tables.end()) {
      auto table = std::make_shared<comply::RuleTable>();
      std::vector<std::string> errors;
      if (Status s = LoadRuleTableFile(*path, table.get(), &errors); !s.ok()) {
        return Status::Error(
            fmt::format("rule table {}: {}", *path, errors.empty() ? s.message() : errors.front()));
      }
      plant->rule_tables.emplace(*path, std::move(table));
    }
    line->rules = *path;
  }
  if (line->nominal_g) {
    comply::NetContentLimits limits;
    const auto& table = *plant->rule_tables.find(line->rules)->second;
    if (Status s =
            comply::ComputeLimits(table, *line->nominal_g, line->rules_allow_unconfirmed, &limits);
        !s.ok()) {
      return Status::Error(fmt::format("nominal {} g and rule table {}: {}", *line->nominal_g,
                                       table.id, s.message()));
    }
  }
  return Status::Ok();
}

Status ResolvePlantRules(PlantSettings* plant, const std::string& base_dir) {
  if (plant->defaults.nominal_g) {
    if (Status s = ResolveLineRules(&plant->defaults, base_dir, plant); !s.ok()) {
      return Status::Error("defaults: " + s.message());
    }
  }
  for (auto& [id, line] : plant->lines) {
    if (!line.nominal_g) continue;
    if (Status s = ResolveLineRules(&line, base_dir, plant); !s.ok()) {
      return Status::Error("line " + id + ": " + s.message());
    }
  }
  return Status::Ok();
}

}  // namespace heft
