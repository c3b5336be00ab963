// rule_table_fuzz.cpp — fuzz target for the net-content rule-table loader
// (io/rule_table_loader.h): any text gives a table or positioned errors, never a crash.
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "core/comply/rule_table.h"
#include "fuzz_check.h"
#include "io/rule_table_loader.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  heft::comply::RuleTable table;
  std::vector<std::string> errors;
  const heft::Status status = heft::LoadRuleTableText(text, "fuzz.yaml", &table, &errors);
  if (status.ok()) {
    FUZZ_CHECK(errors.empty());
  } else {
    FUZZ_CHECK(!errors.empty() || !status.message().empty());
  }
  return 0;
}
