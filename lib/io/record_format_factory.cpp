// record_format_factory.cpp — see record_format_factory.h.
#include "io/record_format_factory.h"

#include <string>

#include "io/json_lines_format.h"

namespace heft {

Status MakeRecordFormat(const FormatSettings& settings, std::unique_ptr<RecordFormat>* out) {
  if (settings.kind != FormatKind::kJsonLines) return MakeCoreRecordFormat(settings, out);
  if (const std::string problem = CheckFormatSettings(settings); !problem.empty()) {
    return Status::Error(problem);
  }
  *out = std::make_unique<JsonLinesFormat>(settings);
  return Status::Ok();
}

}  // namespace heft
