#include "core/design/arl_design.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <functional>
#include <limits>
#include <numbers>
#include <string>

#include <boost/math/distributions/normal.hpp>

#include "core/design/cusum_arl.h"
#include "core/design/ewma_arl.h"
#include "core/design/illinois_root.h"
#include "core/design/standard_normal.h"

namespace heft {
namespace {

constexpr double kMaxArl = 1e10;

// A number for an error message (the core has no formatting library).
std::string G(double v) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.6g", v);
  return buffer;
}

}  // namespace

Status CusumDecisionIntervalForArl(double k, double target_arl0, double* h) {
  if (!std::isfinite(k) || k < 0.0) {
    return Status::Error("CUSUM reference k = " + G(k) + " must be finite and >= 0");
  }
  if (!std::isfinite(target_arl0) || target_arl0 > kMaxArl) {
    return Status::Error("target in-control ARL " + G(target_arl0) +
                         " packs is not finite or above " + G(kMaxArl) + " packs");
  }
  // At h = 0 each side signals when x > k: two-sided ARL 1/(2·P(x > k)).
  const double floor_arl = 1.0 / (2.0 * NormalUpperTail(k));
  if (target_arl0 <= floor_arl) {
    return Status::Error("target in-control ARL " + G(target_arl0) + " packs is not above " +
                         G(floor_arl) + ", the ARL at h = 0 for k = " + G(k));
  }
  auto f = [&](double x) { return LogArlGap(CusumTwoSidedArl(k, x, 0.0), target_arl0); };
  double lo = 0.0, f_lo = std::log(floor_arl) - std::log(target_arl0);
  double hi = 4.0, f_hi = f(hi);
  while (f_hi < 0.0) {  // ARL grows at least like e^{2k·h}: doubling h brackets fast
    lo = hi, f_lo = f_hi;
    hi *= 2.0;
    if (hi > 400.0) return Status::Error("CUSUM decision interval above 400 sigma: k too small");
    f_hi = f(hi);
  }
  *h = IllinoisRoot(f, lo, f_lo, hi, f_hi, 1e-9);
  return Status::Ok();
}

Status DesignCusum(double target_arl0, double shift_sigma, double head_start_fraction,
                   CusumDesign* out) {
  if (!std::isfinite(shift_sigma) || shift_sigma <= 0.0 || shift_sigma > 10.0) {
    return Status::Error("shift to detect " + G(shift_sigma) +
                         " sigma must be above 0 and at most 10");
  }
  if (!std::isfinite(head_start_fraction) || head_start_fraction < 0.0 ||
      head_start_fraction >= 1.0) {
    return Status::Error("head start share " + G(head_start_fraction) + " of h must be in [0, 1)");
  }
  CusumDesign d;
  d.k = shift_sigma / 2.0;
  d.shift_sigma = shift_sigma;
  if (Status s = CusumDecisionIntervalForArl(d.k, target_arl0, &d.h); !s.ok()) return s;
  d.head_start = head_start_fraction * d.h;
  d.arl0 = CusumTwoSidedArl(d.k, d.h, 0.0);
  d.arl0_fir = CusumTwoSidedArl(d.k, d.h, 0.0, d.head_start);
  d.delay_zero_state = CusumTwoSidedArl(d.k, d.h, shift_sigma);
  d.delay_fir = CusumTwoSidedArl(d.k, d.h, shift_sigma, d.head_start);
  d.delay_steady_state = CusumTwoSidedSteadyStateArl(d.k, d.h, shift_sigma);
  *out = d;
  return Status::Ok();
}

Status EwmaLimitForArl(double lambda, double target_arl0, double* limit) {
  if (!std::isfinite(lambda) || lambda <= 0.0 || lambda > 1.0) {
    return Status::Error("EWMA lambda " + G(lambda) + " must be in (0, 1]");
  }
  if (!std::isfinite(target_arl0) || target_arl0 < 2.0 || target_arl0 > kMaxArl) {
    return Status::Error("target in-control ARL " + G(target_arl0) +
                         " packs must be between 2 and " + G(kMaxArl));
  }
  auto f = [&](double x) { return LogArlGap(EwmaArl(lambda, x, 0.0), target_arl0); };
  // Bracket near the Shewhart limit for the same ARL (λ = 1), which is an upper
  // bound for smaller λ in practice; widen step by step if it is not.
  const double shewhart = std::max(0.5, boost::math::quantile(boost::math::complement(
                                            boost::math::normal(), 0.5 / target_arl0)));
  double hi = shewhart + 0.05, f_hi = f(hi);
  double lo = std::max(0.25, shewhart - 0.6), f_lo = f(lo);
  while (f_lo > 0.0 && lo > 1e-3) hi = lo, f_hi = f_lo, lo *= 0.5, f_lo = f(lo);
  while (f_hi < 0.0) {
    lo = hi, f_lo = f_hi;
    hi += 1.0;
    if (hi > 12.0) return Status::Error("EWMA limit above 12 sigma: target ARL too large");
    f_hi = f(hi);
  }
  if (f_lo > 0.0) return Status::Error("EWMA limit below 0.001 sigma: target ARL too small");
  *limit = IllinoisRoot(f, lo, f_lo, hi, f_hi, 1e-9);
  return Status::Ok();
}

Status DesignEwma(double target_arl0, double lambda, double shift_sigma, EwmaDesign* out) {
  if (!std::isfinite(shift_sigma) || shift_sigma <= 0.0 || shift_sigma > 10.0) {
    return Status::Error("shift to detect " + G(shift_sigma) +
                         " sigma must be above 0 and at most 10");
  }
  EwmaDesign d;
  d.lambda = lambda;
  d.shift_sigma = shift_sigma;
  if (Status s = EwmaLimitForArl(lambda, target_arl0, &d.limit); !s.ok()) return s;
  d.arl0 = EwmaArl(lambda, d.limit, 0.0);
  const int nodes = EwmaDelayNodes(lambda, d.limit);
  d.delay_zero_state = EwmaArl(lambda, d.limit, shift_sigma, 0.0, nodes);
  d.delay_steady_state = EwmaSteadyStateArl(lambda, d.limit, shift_sigma, nodes);
  *out = d;
  return Status::Ok();
}

Status DesignEwmaChooseLambda(double target_arl0, double shift_sigma,
                              std::span<const double> lambdas, EwmaDesign* out) {
  if (lambdas.empty()) lambdas = kEwmaLambdaGrid;
  if (!std::isfinite(shift_sigma) || shift_sigma <= 0.0 || shift_sigma > 10.0) {
    return Status::Error("shift to detect " + G(shift_sigma) +
                         " sigma must be above 0 and at most 10");
  }
  double best_lambda = 0.0, best_limit = 0.0;
  double best_delay = std::numeric_limits<double>::infinity();
  for (double lambda : lambdas) {
    double limit = 0.0;
    if (Status s = EwmaLimitForArl(lambda, target_arl0, &limit); !s.ok()) return s;
    const double delay = EwmaArl(lambda, limit, shift_sigma, 0.0, EwmaDelayNodes(lambda, limit));
    if (delay < best_delay) best_delay = delay, best_lambda = lambda, best_limit = limit;
  }
  EwmaDesign d;
  d.lambda = best_lambda;
  d.limit = best_limit;
  d.shift_sigma = shift_sigma;
  d.arl0 = EwmaArl(best_lambda, best_limit, 0.0);
  d.delay_zero_state = best_delay;
  d.delay_steady_state = EwmaSteadyStateArl(best_lambda, best_limit, shift_sigma,
                                            EwmaDelayNodes(best_lambda, best_limit));
  *out = d;
  return Status::Ok();
}

Status DesignEwmaForRamp(double target_arl0, double slope, double shift_sigma,
                         std::span<const double> lambdas, EwmaDesign* out) {
  if (lambdas.empty()) lambdas = kEwmaLambdaGrid;
  if (!std::isfinite(slope) || slope <= 0.0 || slope > 1.0) {
    return Status::Error("ramp slope " + G(slope) + " sigma per pack must be in (0, 1]");
  }
  double best_lambda = 0.0, best_limit = 0.0;
  double best_delay = std::numeric_limits<double>::infinity();
  for (double lambda : lambdas) {
    double limit = 0.0;
    if (Status s = EwmaLimitForArl(lambda, target_arl0, &limit); !s.ok()) return s;
    const double delay = EwmaRampArl(lambda, limit, slope, true, EwmaDelayNodes(lambda, limit));
    if (delay < best_delay) best_delay = delay, best_lambda = lambda, best_limit = limit;
  }
  if (!std::isfinite(shift_sigma) || shift_sigma <= 0.0 || shift_sigma > 10.0) {
    return Status::Error("shift to detect " + G(shift_sigma) +
                         " sigma must be above 0 and at most 10");
  }
  EwmaDesign d;
  d.lambda = best_lambda;
  d.limit = best_limit;
  d.shift_sigma = shift_sigma;
  d.arl0 = EwmaArl(best_lambda, best_limit, 0.0);
  const int nodes = EwmaDelayNodes(best_lambda, best_limit);
  d.delay_zero_state = EwmaArl(best_lambda, best_limit, shift_sigma, 0.0, nodes);
  d.delay_steady_state = EwmaSteadyStateArl(best_lambda, best_limit, shift_sigma, nodes);
  d.ramp_slope = slope;
  d.ramp_delay_steady_state = best_delay;
  *out = d;
  return Status::Ok();
}

int EwmaDelayNodes(double lambda, double limit) {
  if (!(lambda > 0.0 && lambda <= 1.0) || !(limit > 0.0) || !std::isfinite(limit)) return 32;
  const double c = EwmaAsymptoticLimit(lambda, limit);
  return std::clamp(static_cast<int>(std::ceil(0.75 * std::numbers::pi * c / lambda)) + 24, 32,
                    400);
}

}  // namespace heft
