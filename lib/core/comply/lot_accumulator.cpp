// lot_accumulator.cpp — per-lot counts, moments and verdicts.
#include "core/comply/lot_accumulator.h"

#include <cmath>
#include <cstdio>

namespace heft::comply {

namespace {
// d2 for moving ranges of span 2, as the rest of heft uses it (check-values.md §2).
constexpr double kD2 = 1.128;

std::string Fmt(const char* format, double a, double b = 0.0, double c = 0.0) {
  char buf[200];
  std::snprintf(buf, sizeof buf, format, a, b, c);
  return buf;
}
}  // namespace

std::string_view VerdictStateName(VerdictState state) {
  switch (state) {
    case VerdictState::kPass:
      return "pass";
    case VerdictState::kFail:
      return "fail";
    case VerdictState::kNotEvaluated:
      return "not-evaluated";
  }
  return "?";
}

LotAccumulator::LotAccumulator(const NetContentLimits& limits, const LotSettings& settings)
    : limits_(limits), settings_(settings) {}

void LotAccumulator::Reset() { *this = LotAccumulator(limits_, settings_); }

LotAccumulator::Checkpoint LotAccumulator::Save() const {
  Checkpoint c;
  c.count = count_;
  c.rejected = rejected_;
  c.gross = gross_;
  c.errors = errors_;
  c.invalid = invalid_;
  c.seen = seen_;
  c.reference = reference_;
  c.mean_dev = mean_dev_;
  c.m2 = m2_;
  c.sum_mr = sum_mr_;
  c.last = last_;
  c.min = min_;
  c.max = max_;
  c.t1 = t1_;
  c.t2 = t2_;
  c.below_nominal = below_nominal_;
  c.rejected_below_t1 = rejected_below_t1_;
  c.first_time_ms = first_time_ms_;
  c.last_time_ms = last_time_ms_;
  c.first_index = first_index_;
  c.last_index = last_index_;
  c.any = any_;
  return c;
}

void LotAccumulator::Restore(const Checkpoint& c) {
  count_ = c.count;
  rejected_ = c.rejected;
  gross_ = c.gross;
  errors_ = c.errors;
  invalid_ = c.invalid;
  seen_ = c.seen;
  reference_ = c.reference;
  mean_dev_ = c.mean_dev;
  m2_ = c.m2;
  sum_mr_ = c.sum_mr;
  last_ = c.last;
  min_ = c.min;
  max_ = c.max;
  t1_ = c.t1;
  t2_ = c.t2;
  below_nominal_ = c.below_nominal;
  rejected_below_t1_ = c.rejected_below_t1;
  first_time_ms_ = c.first_time_ms;
  last_time_ms_ = c.last_time_ms;
  first_index_ = c.first_index;
  last_index_ = c.last_index;
  any_ = c.any;
}

void LotAccumulator::Add(double grams, PackRole role, std::int64_t time_ms, std::int64_t index) {
  ++seen_;
  if (!any_) {
    first_time_ms_ = time_ms;
    first_index_ = index;
    any_ = true;
  }
  last_time_ms_ = time_ms;
  last_index_ = index;

  switch (role) {
    case PackRole::kGross:
      ++gross_;
      return;
    case PackRole::kError:
      ++errors_;
      return;
    case PackRole::kRejected:
      if (!std::isfinite(grams)) {
        ++invalid_;
        return;
      }
      ++rejected_;
      if (grams < limits_.t1_g) ++rejected_below_t1_;
      if (!settings_.rejects_in_lot) return;
      break;
    case PackRole::kInLot:
      break;
  }
  if (!std::isfinite(grams)) {
    ++invalid_;
    return;
  }

  if (count_ == 0) {
    reference_ = grams;
  } else {
    sum_mr_ += std::fabs(grams - last_);
  }
  last_ = grams;
  ++count_;
  const double dev = grams - reference_;
  const double delta = dev - mean_dev_;
  mean_dev_ += delta / static_cast<double>(count_);
  m2_ += delta * (dev - mean_dev_);
  if (grams < min_) min_ = grams;
  if (grams > max_) max_ = grams;
  if (grams < limits_.t1_g) ++t1_;
  if (limits_.t2_g && grams < *limits_.t2_g) ++t2_;
  if (grams < limits_.nominal_g) ++below_nominal_;
}

LotFigures LotAccumulator::Figures() const {
  LotFigures f;
  f.count = count_;
  f.rejected = rejected_;
  f.gross = gross_;
  f.errors = errors_;
  f.invalid = invalid_;
  f.seen = seen_;
  f.t1_count = t1_;
  f.t2_count = t2_;
  f.below_nominal = below_nominal_;
  f.rejected_below_t1 = rejected_below_t1_;
  f.first_time_ms = first_time_ms_;
  f.last_time_ms = last_time_ms_;
  f.first_index = first_index_;
  f.last_index = last_index_;
  if (count_ > 0) {
    const double n = static_cast<double>(count_);
    f.mean_g = reference_ + mean_dev_;
    f.s_g = count_ > 1 ? std::sqrt(m2_ / (n - 1.0)) : 0.0;
    f.short_term_sigma_g = count_ > 1 ? sum_mr_ / (n - 1.0) / kD2 : 0.0;
    f.min_g = min_;
    f.max_g = max_;
    f.t1_fraction = static_cast<double>(t1_) / n;
    // Σ(x − Qn) from the reference-shifted mean: (reference − Qn + mean_dev) × n.
    f.giveaway_per_pack_g = (reference_ - limits_.nominal_g) + mean_dev_;
    f.giveaway_g = f.giveaway_per_pack_g * n;
    f.giveaway_money = f.giveaway_g / 1000.0 * settings_.cost_per_kg;
  }
  return f;
}

std::vector<RuleVerdict> LotAccumulator::Verdicts(const RuleTable& table,
                                                  bool allow_unconfirmed) const {
  const LotFigures f = Figures();
  std::vector<RuleVerdict> verdicts;
  for (const PackerRule& rule : table.rules) {
    RuleVerdict v;
    v.rule_id = rule.id;
    v.kind = rule.kind;
    v.margin_unit = "g";
    if (!rule.provenance.confirmed && !allow_unconfirmed) {
      v.note = "rule marked unconfirmed in " + table.id + "; not evaluated";
      verdicts.push_back(v);
      continue;
    }
    if (f.count == 0) {
      v.note = "no packs in the lot";
      verdicts.push_back(v);
      continue;
    }
    switch (rule.kind) {
      case PackerRuleKind::kMeanNotBelowNominal:
        v.margin = f.mean_g - limits_.nominal_g;
        v.state = v.margin >= 0.0 ? VerdictState::kPass : VerdictState::kFail;
        v.note = Fmt("mean %.3f g vs nominal %.3f g", f.mean_g, limits_.nominal_g);
        break;
      case PackerRuleKind::kT1FractionAtMost: {
        // Allowed count = floor(limit × count); the epsilon keeps 0.025 × 200 = 5.
        const double allowed =
            std::floor(rule.limit_fraction * static_cast<double>(f.count) + 1e-9);
        v.margin = allowed - static_cast<double>(f.t1_count);
        v.margin_unit = "packs";
        v.state = v.margin >= 0.0 ? VerdictState::kPass : VerdictState::kFail;
        v.note = Fmt("%.0f below T1 = %.3f %% (limit %.3f %%)", static_cast<double>(f.t1_count),
                     100.0 * f.t1_fraction, 100.0 * rule.limit_fraction);
        break;
      }
      case PackerRuleKind::kNoPackBelowT2:
        if (!limits_.t2_g) {
          v.note = "the table defines no T2 limit";
          break;
        }
        v.margin = f.min_g - *limits_.t2_g;
        v.state = f.t2_count == 0 ? VerdictState::kPass : VerdictState::kFail;
        v.note = Fmt("%.0f below T2 %.3f g; lightest %.3f g", static_cast<double>(f.t2_count),
                     *limits_.t2_g, f.min_g);
        break;
      case PackerRuleKind::kNoPackBelowT1:
        v.margin = f.min_g - limits_.t1_g;
        v.state = f.t1_count == 0 ? VerdictState::kPass : VerdictState::kFail;
        v.note = Fmt("%.0f below T1 %.3f g; lightest %.3f g", static_cast<double>(f.t1_count),
                     limits_.t1_g, f.min_g);
        break;
    }
    verdicts.push_back(v);
  }
  return verdicts;
}

}  // namespace heft::comply
