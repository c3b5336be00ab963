// lot_json.h — one closed lot as one line of JSON, for `heft replay
// --lots-out` and `heft lots --format json`.
//
// Keys come in a fixed order (line, seq, lot_id, boundary, partial, opened,
// first_index, last_index, first_time, last_time, rules, nominal_g, tne_g,
// t1_g, t2_g, count, ..., verdicts, safe_target, caution) so two runs can be
// compared byte for byte. Grams and money are rounded to 4 decimals, times are
// ISO-8601 UTC. Stateless; thread-safe.
#pragma once

#include <string>

#include "core/monitor/lot_report.h"

namespace heft {

// The caution that goes with every lot figure heft prints.
inline constexpr const char* kLotCaution =
    "These figures are the packer's own control; they do not replace checks by the legal "
    "metrology authority, and the regulation texts in force locally prevail over the tables "
    "shipped here.";

// One JSON object, no trailing newline.
std::string LotToJson(const LotReport& lot);

}  // namespace heft
