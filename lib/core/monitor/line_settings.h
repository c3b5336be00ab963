// line_settings.h — what the core needs to know about one packaging line.
//
// Plain values with defaults a plant engineer would start from. The YAML
// loader (io/config) fills these; tests construct them directly.
#pragma once

#include <cstdint>
#include <map>
#include <memory>
#include <optional>
#include <string>

#include "core/comply/compliance_alert.h"
#include "core/comply/lot_clock.h"
#include "core/comply/rule_table.h"
#include "core/comply/safe_target.h"

namespace heft {

struct LineSettings {
  std::string product;               // free text for messages, e.g. "Rolled oats 500 g"
  std::optional<double> nominal_g;   // nominal quantity (label), grams
  std::optional<double> target_g;    // filler set point, grams
  int heads = 0;                     // filler heads (0 = not known)

  // Detector design targets.
  double false_alarms_per_day = 1.0;  // acceptable false alarms per line per 24 h of running
  double pack_rate_per_min = 120.0;   // expected packs per minute (for the design)
  double min_shift_sigma = 1.0;       // smallest mean change worth catching, in sigma

  // Start-up and silence.
  int baseline_packs = 300;           // packs collected after a start to learn the baseline
  std::int64_t silence_ms = 60'000;   // no pack for this long: line silent, restart settling

  // Detection engine (0 for a count = derive it from the false-alarm budget).
  double drift_lambda = 0.05;         // EWMA weight of the drift detector
  double head_shift_sigma = 2.0;      // smallest single-head offset worth catching, sigma
  double spread_ratio = 1.5;          // smallest sigma ratio (now/baseline) worth catching
  double min_cycle_sigma = 0.5;       // smallest cycle amplitude worth reporting, sigma
  int cycle_window_packs = 512;       // periodicity test window (rounded up to a power of 2)
  int cycle_every_packs = 128;        // run the periodicity test every this many packs
  bool run_rules = true;              // Western Electric / Nelson rules on subgroup means
  int subgroup_packs = 0;             // run-rule subgroup; 0 = heads (one turn) or 5
  int run_one_side_count = 0;         // long_run_one_side (Nelson 2)
  int run_trend_count = 0;            // steady_trend (Nelson 3)
  int run_sawtooth_count = 0;         // sawtooth (Nelson 4)
  int run_hugging_count = 0;          // hugging_centre (Nelson 7)
  int run_avoiding_count = 0;         // avoiding_centre (Nelson 8)
  int stuck_packs = 8;                // identical readings in a row that mean a stuck sensor (floor)
  int outlier_burst_packs = 5;        // outliers in one burst that make it an alarm
  int settling_alarm_packs = 1500;    // settling longer than this (packs) raises an alarm
  int baseline_block_packs = 500;     // the baseline takes in checked packs in blocks of this

  // Gross packs: outside [low, high] x nominal (or x the baseline level when no nominal).
  double gross_low_ratio = 0.5;
  double gross_high_ratio = 1.5;

  // Net-content compliance (lines with a nominal_g only; see line_compliance.h).
  // `rules` names a rule table file; the config loader resolves it to a path
  // and loads it into PlantSettings::rule_tables ("none" = no compliance accounting).
  std::string rules = "eu-average-quantity.yaml";
  bool rules_allow_unconfirmed = false;  // use table rows marked unconfirmed (from memory)
  comply::LotPolicy lots;                // default: one lot per clock hour (UTC)
  double cost_per_kg = 0.0;              // product cost for giveaway money; 0 = none
  bool rejects_in_lot = false;           // rejected packs return into the lot
  comply::ComplianceAlertSettings compliance;
  int compliance_hold_off_packs = 50;    // a lower level must hold this long before it clears
  comply::SafeTargetSettings safe_target;
};

struct PlantSettings {
  LineSettings defaults;                                  // for lines the config does not name
  std::map<std::string, LineSettings, std::less<>> lines;  // by line id
  std::size_t max_lines = 1000;                           // refuse new line ids beyond this
  // Loaded rule tables by resolved path (LineSettings::rules after loading).
  // Filled by the io layer; the core never reads files.
  std::map<std::string, std::shared_ptr<const comply::RuleTable>, std::less<>> rule_tables;
};

}  // namespace heft
