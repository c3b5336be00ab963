// scenario.cpp — condition builders and scenario validation.
#include "core/sim/scenario.h"

#include <cmath>
#include <numbers>
#include <string>

namespace heft {

std::string_view ConditionKindName(ConditionKind kind) {
  switch (kind) {
    case ConditionKind::kStep:
      return "step";
    case ConditionKind::kRamp:
      return "ramp";
    case ConditionKind::kHeadOff:
      return "head-off";
    case ConditionKind::kHunting:
      return "hunting";
    case ConditionKind::kAlternation:
      return "alternation";
    case ConditionKind::kStartupFirstOrder:
      return "startup";
    case ConditionKind::kStartupUnderdamped:
      return "startup-oscillating";
    case ConditionKind::kSpread:
      return "spread";
    case ConditionKind::kStuck:
      return "stuck";
    case ConditionKind::kStop:
      return "stop";
  }
  return "unknown";
}

Condition Condition::Step(std::int64_t start, double size_g, std::int64_t end) {
  Condition c;
  c.kind = ConditionKind::kStep;
  c.start_pack = start;
  c.end_pack = end;
  c.size_grams = size_g;
  return c;
}

Condition Condition::Ramp(std::int64_t start, double slope_g_per_pack, std::int64_t end) {
  Condition c;
  c.kind = ConditionKind::kRamp;
  c.start_pack = start;
  c.end_pack = end;
  c.size_grams = slope_g_per_pack;
  return c;
}

Condition Condition::HeadOff(std::int64_t start, int head, double offset_g, std::int64_t end) {
  Condition c;
  c.kind = ConditionKind::kHeadOff;
  c.start_pack = start;
  c.end_pack = end;
  c.head = head;
  c.size_grams = offset_g;
  return c;
}

Condition Condition::Hunting(std::int64_t start, double amplitude_g, double period_packs,
                             std::int64_t end) {
  Condition c;
  c.kind = ConditionKind::kHunting;
  c.start_pack = start;
  c.end_pack = end;
  c.size_grams = amplitude_g;
  c.period_packs = period_packs;
  return c;
}

Condition Condition::Alternation(std::int64_t start, double amplitude_g, std::int64_t end) {
  Condition c;
  c.kind = ConditionKind::kAlternation;
  c.start_pack = start;
  c.end_pack = end;
  c.size_grams = amplitude_g;
  return c;
}

Condition Condition::StartupFirstOrder(std::int64_t start, double amplitude_g, double tau_packs) {
  Condition c;
  c.kind = ConditionKind::kStartupFirstOrder;
  c.start_pack = start;
  c.size_grams = amplitude_g;
  c.tau_packs = tau_packs;
  return c;
}

Condition Condition::StartupUnderdamped(std::int64_t start, double amplitude_g, double zeta,
                                        double natural_period_packs) {
  Condition c;
  c.kind = ConditionKind::kStartupUnderdamped;
  c.start_pack = start;
  c.size_grams = amplitude_g;
  c.zeta = zeta;
  c.period_packs = natural_period_packs;
  return c;
}

Condition Condition::Spread(std::int64_t start, double factor, std::int64_t end) {
  Condition c;
  c.kind = ConditionKind::kSpread;
  c.start_pack = start;
  c.end_pack = end;
  c.factor = factor;
  return c;
}

Condition Condition::Stuck(std::int64_t start, std::int64_t packs) {
  Condition c;
  c.kind = ConditionKind::kStuck;
  c.start_pack = start;
  c.end_pack = start + packs;
  return c;
}

Condition Condition::Stop(std::int64_t start, double seconds) {
  Condition c;
  c.kind = ConditionKind::kStop;
  c.start_pack = start;
  c.end_pack = start + 1;  // the label marks the first pack after the silence
  c.stop_seconds = seconds;
  return c;
}

std::int64_t Condition::LabelEnd() const {
  if (end_pack >= 0) return end_pack;
  // 2 % settling time, check-values.md §5.2 (common practice).
  if (kind == ConditionKind::kStartupFirstOrder && tau_packs > 0) {
    return start_pack + static_cast<std::int64_t>(std::ceil(4.0 * tau_packs));
  }
  if (kind == ConditionKind::kStartupUnderdamped && zeta > 0 && period_packs > 0) {
    const double omega_n = 2.0 * std::numbers::pi / period_packs;
    return start_pack + static_cast<std::int64_t>(std::ceil(4.0 / (zeta * omega_n)));
  }
  if (kind == ConditionKind::kStop) return start_pack + 1;
  return -1;
}

bool Condition::ActiveAt(std::int64_t pack) const {
  if (pack < start_pack) return false;
  const std::int64_t end = LabelEnd();
  return end < 0 || pack < end;
}

bool IsValidLineId(std::string_view id) {
  if (id.empty() || id.size() > 64) return false;
  for (char ch : id) {
    const bool ok = (ch >= 'A' && ch <= 'Z') || (ch >= 'a' && ch <= 'z') ||
                    (ch >= '0' && ch <= '9') || ch == '_' || ch == '.' || ch == '-';
    if (!ok) return false;
  }
  return true;
}

namespace {

bool Finite(double x) { return std::isfinite(x); }

Status ConditionError(std::size_t i, const Condition& c, const std::string& why) {
  return Status::Error("condition " + std::to_string(i) + " (" +
                       std::string(ConditionKindName(c.kind)) + " at pack " +
                       std::to_string(c.start_pack) + "): " + why);
}

Status ValidateCondition(std::size_t i, const Condition& c, const ScenarioSpec& spec) {
  if (c.start_pack < 0) return ConditionError(i, c, "start pack must be >= 0");
  if (c.end_pack >= 0 && c.end_pack <= c.start_pack) {
    return ConditionError(i, c, "end pack must be after the start pack (or -1 = open)");
  }
  if (!Finite(c.size_grams)) return ConditionError(i, c, "size is not a finite number");
  switch (c.kind) {
    case ConditionKind::kStep:
    case ConditionKind::kRamp:
    case ConditionKind::kAlternation:
      break;
    case ConditionKind::kHeadOff:
      if (c.head < 0 || c.head >= spec.heads) {
        return ConditionError(
            i, c,
            "head " + std::to_string(c.head) + " is not in 0.." + std::to_string(spec.heads - 1));
      }
      break;
    case ConditionKind::kHunting:
      if (!(c.period_packs >= 2.0) || !Finite(c.period_packs)) {
        return ConditionError(i, c, "period must be at least 2 packs");
      }
      break;
    case ConditionKind::kStartupFirstOrder:
      if (!(c.tau_packs > 0.0) || !Finite(c.tau_packs)) {
        return ConditionError(i, c, "time constant tau must be > 0 packs");
      }
      break;
    case ConditionKind::kStartupUnderdamped:
      if (!(c.zeta > 0.0 && c.zeta < 1.0)) {
        return ConditionError(i, c, "damping ratio zeta must be in (0, 1)");
      }
      if (!(c.period_packs > 0.0) || !Finite(c.period_packs)) {
        return ConditionError(i, c, "natural period must be > 0 packs");
      }
      break;
    case ConditionKind::kSpread:
      if (!(c.factor >= 0.0) || !Finite(c.factor)) {
        return ConditionError(i, c, "spread factor must be >= 0");
      }
      break;
    case ConditionKind::kStuck:
      if (c.end_pack < 0) return ConditionError(i, c, "a stuck sensor needs a length in packs");
      break;
    case ConditionKind::kStop:
      if (!(c.stop_seconds > 0.0) || !(c.stop_seconds < 1e9)) {
        return ConditionError(i, c, "stop length must be > 0 seconds");
      }
      break;
  }
  return Status::Ok();
}

}  // namespace

Status ValidateScenario(const ScenarioSpec& spec) {
  if (!IsValidLineId(spec.line_id)) {
    return Status::Error("line id '" + spec.line_id +
                         "' is not 1..64 characters of A-Z a-z 0-9 _ . -");
  }
  if (!(spec.nominal_grams > 0.0) || !Finite(spec.nominal_grams)) {
    return Status::Error("nominal quantity must be > 0 g");
  }
  if (!(spec.level_grams > 0.0) || !Finite(spec.level_grams)) {
    return Status::Error("fill level must be > 0 g");
  }
  if (!(spec.sigma_grams >= 0.0) || !Finite(spec.sigma_grams)) {
    return Status::Error("sigma must be >= 0 g");
  }
  if (spec.heads < 1 || spec.heads > 1000) return Status::Error("heads must be in 1..1000");
  if (!spec.head_offsets_grams.empty() &&
      spec.head_offsets_grams.size() != static_cast<std::size_t>(spec.heads)) {
    return Status::Error("head offsets: " + std::to_string(spec.head_offsets_grams.size()) +
                         " given for " + std::to_string(spec.heads) + " heads");
  }
  for (double offset : spec.head_offsets_grams) {
    if (!Finite(offset)) return Status::Error("head offsets must be finite numbers");
  }
  if (!(std::fabs(spec.phi) < 1.0)) return Status::Error("phi must be in (-1, 1)");
  if (!(spec.packs_per_minute > 0.0 && spec.packs_per_minute <= 60000.0)) {
    return Status::Error("pack rate must be in (0, 60000] per minute");
  }
  if (!(spec.gross_probability >= 0.0 && spec.gross_probability <= 1.0)) {
    return Status::Error("gross-pack probability must be in [0, 1]");
  }
  if (spec.conditions.size() > kMaxConditions) {
    return Status::Error("at most " + std::to_string(kMaxConditions) + " conditions");
  }
  for (std::size_t i = 0; i < spec.conditions.size(); ++i) {
    Status status = ValidateCondition(i, spec.conditions[i], spec);
    if (!status.ok()) return status;
  }
  return Status::Ok();
}

}  // namespace heft
