// lot_report.h — one closed lot of one line: its net-content and giveaway
// figures, the verdict under each packer's rule and the lowest-safe-target
// advice.
//
// Produced by LineCompliance when a lot closes, drained from the Plant by heftd
// and `heft replay`, stored by the Store (tables lots and lot_verdicts) and
// printed by `heft lots`. The figures are the packer's own control, not a legal
// check. Plain value type (owns all its text); thread-agnostic.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "core/comply/lot_accumulator.h"

namespace heft {

struct LotVerdict {
  std::string rule_id;  // e.g. "mean", "t1_fraction", "no_t2"
  std::string state;    // "pass", "fail", "not-evaluated"
  double margin = 0.0;  // distance to failure, ≥ 0 while passing
  std::string unit;     // "g" or "packs"
  std::string note;     // the figures in words, or why not evaluated
};

struct SafeTargetAdvice {
  double target_g = 0.0;  // lowest safe mean fill
  std::string binding_rule;
  double sigma_g = 0.0;  // pack spread used
  double packs_per_hour = 0.0;
  double saving_per_pack_g = 0.0;  // current mean − target; negative = raise the fill
  double saving_per_hour_g = 0.0;
  double saving_per_year_kg = 0.0;
  double saving_per_year_money = 0.0;
  bool raise_needed = false;
  std::string text;  // plain advisory sentences
};

struct LotReport {
  std::string line;
  std::int64_t seq = 0;        // 1-based per line, counted since the Plant was created
  std::string lot_id;          // "oats-1 2026-03-02T06:00Z" (time lots) or "oats-1 #3"
  std::string boundary;        // "count", "hour", "shifts", "manual"
  bool partial = false;        // closed before its natural end (shutdown, end of replay)
  std::int64_t opened_ms = 0;  // start of its hour/shift; first pack time otherwise
  std::string rules_id;        // rule table id, e.g. "eu-average-quantity"
  double nominal_g = 0.0;
  double tne_g = 0.0;  // tolerance (TNE or MAV), grams
  double t1_g = 0.0;
  std::optional<double> t2_g;
  double cost_per_kg = 0.0;
  comply::LotFigures figures;
  std::vector<LotVerdict> verdicts;
  std::optional<SafeTargetAdvice> advice;  // none when the lot had too few packs
};

}  // namespace heft
