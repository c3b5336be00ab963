// history_sample.h — the plain values a report or query works on: one stored
// pack, one stored event, a line's facts and the time zone it is shown in.
//
// Filled by io/history_queries from the database (or by tests by hand) and read
// by the period summary, the grouping and the report builder. Plain values;
// thread-agnostic.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "core/model/finding.h"

namespace heft {

struct HistorySample {
  std::int64_t time_ms = 0;
  double grams = 0.0;
  int head = -1;   // -1 = the feed named none
  int status = 0;  // PackStatus: 0 ok, 1 rejected, 2 weighing error
  std::int64_t record_index = 0;
};

struct HistoryEvent {
  Finding finding;
  std::string message;
};

struct HistoryLine {
  std::string line;
  std::string product;
  std::optional<double> nominal_g;
  std::optional<double> target_g;
  int heads = 0;
};

}  // namespace heft
