// capability.h — process capability against limits from the package rules (typically a
// lower limit only: nominal − TNE): Cp, Cpk from short-term sigma (MR̄/d2), Pp, Ppk from the
// overall sample sd, one-sided Cpl/Cpu/Ppl/Ppu, with the limits and sigmas returned beside
// them (check-values.md §7).
//
//   Cp = (USL − LSL)/(6 σw)   Cpl = (μ − LSL)/(3 σw)   Cpu = (USL − μ)/(3 σw)
//   Cpk = min of the one-sided indices available (= Cpl when only a lower limit exists)
//   Pp, Ppl, Ppu, Ppk the same with the overall sd.
// These are the packer's own control figures, not legal verification. Pure; thread-safe.
#pragma once

#include <cstddef>
#include <optional>

#include "core/stats/stats_types.h"

namespace heft {

CapabilityData ComputeCapability(std::size_t count, double mean, double sigma_within,
                                 double sigma_overall, std::optional<double> lower_limit,
                                 std::optional<double> upper_limit);

// From a window summary: sigma_within = mr_sigma, sigma_overall = sd.
CapabilityData ComputeCapability(const WindowSummary& summary, std::optional<double> lower_limit,
                                 std::optional<double> upper_limit);

}  // namespace heft
