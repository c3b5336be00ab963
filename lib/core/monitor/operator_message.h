// operator_message.h — turns a finding into a short, plain message for the line.
//
// What, where, since when, how much, and what to check first. Pure.
#pragma once

#include <string>

#include "core/model/finding.h"
#include "core/monitor/line_settings.h"

namespace heft {

std::string OperatorMessage(const Finding& finding, const LineSettings& line);

}  // namespace heft
