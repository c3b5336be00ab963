// source_config_loader.h — reads the `sources:` list of the YAML config into
// SourceSettings, checking every key like the rest of the config: unknown
// keys, wrong types, out-of-range values and formats that cannot work are
// reported as "FILE:LINE:COLUMN: sources[i].key.path: reason", all at once.
// Called by config_loader.cpp (which merges and sorts the problems) and
// usable alone. yaml-cpp exceptions stay inside. Thread-safe (no state).
#pragma once

#include <string>
#include <vector>

#include <yaml-cpp/yaml.h>

#include "io/source_settings.h"

namespace heft {

struct ConfigProblem {
  int line = 0;    // 1-based
  int column = 0;  // 1-based
  std::string text;
};

void LoadSourcesNode(const YAML::Node& node, const std::string& file_name,
                     std::vector<SourceSettings>* out, std::vector<ConfigProblem>* problems);

}  // namespace heft
