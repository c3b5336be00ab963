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
#include "io/alerting_settings.h"
#include "io/source_settings.h"

namespace heft {

struct ListenSettings {
  std::string address = "127.0.0.1";
  int port = 7311;
  int max_connections = 64;
  // false when the config lists `sources:` but has no `listen:` block.
  bool enabled = true;
};

struct StorageSettings {
  std::string database = "heft.db";
  bool raw_samples = true;      // keep every pack, not only events
  int raw_retention_days = 30;  // 0 = keep forever
  int flush_interval_ms = 250;  // batch commit interval (bounds loss on power cut)
  int batch_max_rows = 20'000;
  // heftd saves every line's restart checkpoint this often (and at shutdown);
  // 0 = only at shutdown. Bounds what a crash loses of the lines' state.
  int checkpoint_interval_s = 30;
};

struct LogSettings {
  std::string file;  // empty = console only
  std::string level = "info";
};

// heftd's HTTP API and live page (daemon/http_server.h). Off unless an `http:`
// block is given; then on unless `enabled: false`.
struct HttpSettings {
  bool enabled = false;
  std::string address = "127.0.0.1";  // this machine only by default
  int port = 7380;                    // 0 = any free port (tests)
  std::string token;                  // empty = no operator actions over HTTP
};

struct Config {
  std::string path;  // where it was read from
  ListenSettings listen;
  StorageSettings storage;
  LogSettings log;
  HttpSettings http;  // the `http:` block
  PlantSettings plant;
  AlertingSettings alerting;            // the `alerting:` block (io/alerting_loader.h)
  std::vector<SourceSettings> sources;  // the `sources:` list (io/source_settings.h)
};

// Loads and validates; on failure *errors holds one line per problem.
Status LoadConfigFile(const std::string& path, Config* out, std::vector<std::string>* errors);
Status LoadConfigText(const std::string& text, const std::string& name, Config* out,
                      std::vector<std::string>* errors);

}  // namespace heft
