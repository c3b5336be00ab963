// message_template.h — a tiny template language for operator messages, so a
// plant can reword or translate them (config/messages.yaml).
//
//   {name}      a named value; unknown names are refused by ValidateTemplate
//   [ ... ]     an optional group: left out when any value named in it is empty
//   {{ }} [[ ]] literal braces and brackets
// Groups do not nest. Pure; thread-compatible.
#pragma once

#include <map>
#include <string>
#include <string_view>
#include <vector>

#include "core/model/status.h"

namespace heft {

using TemplateValues = std::map<std::string, std::string, std::less<>>;

// Checks syntax and that every placeholder is in `known`. The error names the
// 1-based column and the reason, e.g. "column 12: unknown placeholder {sise_g}".
Status ValidateTemplate(std::string_view text, const std::vector<std::string_view>& known);

// Renders a template (validated or not: a syntax error renders literally,
// an unknown name as empty).
std::string RenderTemplate(std::string_view text, const TemplateValues& values);

}  // namespace heft
