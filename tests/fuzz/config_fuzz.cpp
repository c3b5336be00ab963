// config_fuzz.cpp — fuzz target for the YAML config loader (io/config_loader.h): any
// text gives either a config or a list of positioned errors, never an exception or crash.
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "fuzz_check.h"
#include "io/config_loader.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  heft::Config config;
  std::vector<std::string> errors;
  const heft::Status status = heft::LoadConfigText(text, "fuzz.yaml", &config, &errors);
  if (status.ok()) {
    FUZZ_CHECK(errors.empty());
    FUZZ_CHECK(config.listen.port >= 0 && config.listen.port <= 65535);
  } else {
    FUZZ_CHECK(!errors.empty() || !status.message().empty());
  }
  return 0;
}
