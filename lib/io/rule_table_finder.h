// rule_table_finder.h — finds net-content rule tables (config/rules/*.yaml)
// by file path or by name, and loads the tables a plant's lines name into
// PlantSettings::rule_tables, once per file.
//
// A `rules` value is tried as a file (relative to `base_dir`, usually the
// config file's folder, then the working directory); a bare name is then
// looked up, with or without ".yaml", in $HEFT_RULES_DIR, config/rules beside
// the program (build tree or <prefix>/share/heft/rules) and config/rules under
// the working directory. Used by the config loader, `heft replay` and `heft
// lots`. Stateless functions; thread-safe apart from reading the environment.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "core/model/status.h"
#include "core/monitor/line_settings.h"

namespace heft {

// The file `rules` names, or nullopt; *tried (if given) lists what was looked at.
std::optional<std::string> FindRuleTableFile(const std::string& rules, const std::string& base_dir,
                                             std::vector<std::string>* tried);

// Resolves `line->rules` to a file, loads it into plant->rule_tables unless
// it is there already, rewrites `line->rules` to the table's key and, when the
// line has a nominal, checks that the table covers it. "none" is left alone.
// The error message has no position; callers add it.
Status ResolveLineRules(LineSettings* line, const std::string& base_dir, PlantSettings* plant);

// ResolveLineRules for the defaults (when they have a nominal, e.g. from
// `heft replay --nominal`) and every line with a nominal.
Status ResolvePlantRules(PlantSettings* plant, const std::string& base_dir);

}  // namespace heft
