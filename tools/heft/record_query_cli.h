// record_query_cli.h — the options `heft events` and `heft lots` share: --db, --line,
// --since, --until, --limit and --format, each value checked as it is taken.
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>

#include "command.h"

namespace heft::cli {

struct RecordQueryOptions {
  std::string db;
  std::optional<std::string> line;
  std::optional<std::int64_t> since_ms, until_ms;
  std::size_t limit = 0;  // 0 = no limit
  OutputFormat format = OutputFormat::kTable;
};

// Tries one shared option at the reader's position. True if one was taken; then a
// bad value leaves a one-line reason naming the option in *error.
bool TakeRecordQueryOption(ArgReader& reader, RecordQueryOptions* options, std::string* error);

}  // namespace heft::cli
