#include "core/stats/capability.h"

#include <algorithm>
#include <cmath>

namespace heft {
namespace {

struct Indices {
  std::optional<double> both, lower, upper, worst;
};

Indices ForSigma(double mean, double sigma, std::optional<double> lsl, std::optional<double> usl) {
  Indices out;
  if (!(sigma > 0.0) || !std::isfinite(sigma)) return out;
  if (lsl) out.lower = (mean - *lsl) / (3.0 * sigma);
  if (usl) out.upper = (*usl - mean) / (3.0 * sigma);
  if (lsl && usl) out.both = (*usl - *lsl) / (6.0 * sigma);
  if (out.lower && out.upper) {
    out.worst = std::min(*out.lower, *out.upper);
  } else {
    out.worst = out.lower ? out.lower : out.upper;
  }
  return out;
}

}  // namespace

CapabilityData ComputeCapability(std::size_t count, double mean, double sigma_within,
                                 double sigma_overall, std::optional<double> lower_limit,
                                 std::optional<double> upper_limit) {
  CapabilityData c;
  c.count = count;
  c.lower_limit = lower_limit;
  c.upper_limit = upper_limit;
  c.mean = mean;
  c.sigma_within = sigma_within;
  c.sigma_overall = sigma_overall;
  if (count < 2) return c;
  const Indices within = ForSigma(mean, sigma_within, lower_limit, upper_limit);
  c.cp = within.both;
  c.cpl = within.lower;
  c.cpu = within.upper;
  c.cpk = within.worst;
  const Indices overall = ForSigma(mean, sigma_overall, lower_limit, upper_limit);
  c.pp = overall.both;
  c.ppl = overall.lower;
  c.ppu = overall.upper;
  c.ppk = overall.worst;
  return c;
}

CapabilityData ComputeCapability(const WindowSummary& s, std::optional<double> lower_limit,
                                 std::optional<double> upper_limit) {
  return ComputeCapability(s.count, s.mean, s.mr_sigma, s.sd, lower_limit, upper_limit);
}

}  // namespace heft
