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

// Copies the shared filters into a store query (EventQuery or LotQuery).
template <class Query>
void ApplyRecordQueryOptions(const RecordQueryOptions& options, Query* query) {
  query->line = options.line;
  query->since_ms = options.since_ms;
  query->until_ms = options.until_ms;
  query->limit = options.limit;
}

}  // namespace heft::cli
