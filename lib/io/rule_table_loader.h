// rule_table_loader.h — reads a net-content rule table (config/rules/*.yaml)
// into a comply::RuleTable.
//
// Every error names file:line:column and the key path, e.g.
// "eu.yaml:12:7: tolerance.bands[2].percent: not a number"; all errors are
// collected and reported at once. Used by `heft limits`, heftd and tests.
// Stateless functions; thread-safe.
#pragma once

#include <string>
#include <vector>

#include "core/comply/rule_table.h"
#include "core/model/status.h"

namespace heft {

// Loads and validates; on failure *errors holds one line per problem and the
// Status says how many there were.
Status LoadRuleTableFile(const std::string& path, comply::RuleTable* out,
                         std::vector<std::string>* errors);
Status LoadRuleTableText(const std::string& text, const std::string& name, comply::RuleTable* out,
                         std::vector<std::string>* errors);

}  // namespace heft
