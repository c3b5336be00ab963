// record_format_factory.h — builds any configured RecordFormat, JSON lines
// included (the core's MakeCoreRecordFormat cannot: nlohmann-json is an io
// dependency). Used by the config loader (to check a descriptor once), heftd
// (once per source, then Clone() per connection) and `heft replay`.
// Thread-safe (no shared state).
#pragma once

#include <memory>

#include "core/model/status.h"
#include "core/record/format_settings.h"
#include "core/record/record_format.h"

namespace heft {

Status MakeRecordFormat(const FormatSettings& settings, std::unique_ptr<RecordFormat>* out);

}  // namespace heft
