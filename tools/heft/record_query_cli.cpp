#include "record_query_cli.h"

namespace heft::cli {

bool TakeRecordQueryOption(ArgReader& reader, RecordQueryOptions* options, std::string* error) {
  std::string value;
  if (reader.Option("--db", &value)) {
    options->db = value;
  } else if (reader.Option("--line", &value)) {
    options->line = value;
  } else if (reader.Option("--since", &value)) {
    ParseTimeOption("--since", value, &options->since_ms, error);
  } else if (reader.Option("--until", &value)) {
    ParseTimeOption("--until", value, &options->until_ms, error);
  } else if (reader.Option("--limit", &value)) {
    ParseLimitOption(value, &options->limit, error);
  } else if (reader.Option("--format", &value)) {
    ParseFormatOption(value, &options->format, error);
  } else {
    return false;
  }
  return true;
}

}  // namespace heft::cli
