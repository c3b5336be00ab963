// alerting_loader.h — reads the `alerting:` block of the configuration and
// the message template file it names (config/messages.yaml).
//
// Errors go to `error(mark, key.path, reason)`, so config_loader reports them
// like every other key ("FILE:LINE:COLUMN: alerting.channels[0].url: ...").
// Errors inside the template file are reported at the `messages` key with the
// template file's own position in the reason. Used by config_loader only.
#pragma once

#include <functional>
#include <string>
#include <string_view>
#include <vector>

#include <yaml-cpp/yaml.h>

#include "core/model/status.h"
#include "io/alerting_settings.h"

namespace heft {

using AlertingErrorFn =
    std::function<void(const YAML::Mark& mark, std::string_view path, std::string_view reason)>;

// `config_path` locates a relative `messages` file (beside the config).
void LoadAlerting(const YAML::Node& node, const std::string& config_path,
                  const AlertingErrorFn& error, AlertingSettings* out);

// A template file: {messages: {KIND: {raised, raised_head, cleared}, REASON: TEXT}}.
// Each problem is one "FILE:LINE:COLUMN: messages.KEY: reason" line.
Status LoadMessageCatalogText(const std::string& text, const std::string& name, MessageCatalog* out,
                              std::vector<std::string>* errors);
Status LoadMessageCatalogFile(const std::string& path, MessageCatalog* out,
                              std::vector<std::string>* errors);

}  // namespace heft
