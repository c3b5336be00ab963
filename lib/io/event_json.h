// event_json.h — the JSON form of an event state change (the replay contract).
//
// One object per line, keys in a fixed order so output is byte-stable:
//   {"event":"raised"|"cleared","kind":K,"line":L,"at":I,"onset":I|null,
//    "end":I|null,"severity":S,"message":M, ...extra fields...}
// Extra fields: at_time, onset_time (ISO-8601 UTC), size_g, size_sigma,
// level_g, period_packs, period_s, slope_g_per_h, head, detector — present only when known. Numbers
// are printed with fixed precision (3 decimals for grams and sigmas).
#pragma once

#include <string>
#include <string_view>

#include "core/model/finding.h"

namespace heft {

std::string FindingToJson(const Finding& finding, std::string_view message);

// Appends `text` to *out as a JSON string literal (with quotes), escaping
// control characters and invalid UTF-8 bytes (as \u00XX).
void AppendJsonString(std::string_view text, std::string* out);

}  // namespace heft
