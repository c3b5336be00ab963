// config_loader.h — reads heft's YAML configuration into plain settings.
//
// Every error names file:line:column and the key path; all errors are
// collected and reported at once. Used by heftd and the heft tools.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "core/model/status.h"
#include "core/monitor/line_settings.h"

namespace heft {

struct ListenSettings {
  std::string address = "127.0.0.1";
  int port = 7311;
  int max_connections = 64;
};

struct StorageSettings {
  std::string database = "heft.db";
  bool raw_samples = true;            // keep every pack, not only events
  int raw_retention_days = 30;        // 0 = keep forever
  int flush_interval_ms = 250;        // batch commit interval (bounds loss on power cut)
  int batch_max_rows = 20'000;
};

struct LogSettings {
  std::string file;                   // empty = console only
  std::string level = "info";
};

struct Config {
  std::string path;                   // where it was read from
  ListenSettings listen;
  StorageSettings storage;
  LogSettings log;
  PlantSettings plant;
};

// Loads and validates; on failure *errors holds one line per problem.
Status LoadConfigFile(const std::string& path, Config* out, std::vector<std::string>* errors);
Status LoadConfigText(const std::string& text, const std::string& name, Config* out,
                      std::vector<std::string>* errors);

}  // namespace heft
