// design_command.cpp — `heft design`: detector parameters from a false-alarm budget.
//
// Prints what DesignLineDetectors (core/detect/detector_design.h) chooses for a
// pack rate, a false-alarm budget and the smallest shift worth catching: each
// detector's parameters, its in-control ARL (packs and hours) and its expected
// delay for the shift (packs and seconds), next to what textbook rules run on
// every pack would give. Thin: parses arguments, calls the core, formats.
#include <charconv>
#include <chrono>
#include <cmath>
#include <ostream>
#include <string>
#include <string_view>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "command.h"
#include "core/design/shewhart_arl.h"
#include "core/design/western_electric_arl.h"
#include "core/detect/detector_design.h"

namespace heft::cli {
namespace {

constexpr const char* kUsage =
    "usage: heft design --rate PACKS_PER_MIN [--false-alarms-per-day F] [--shift SIGMA]\n"
    "                   [--drift SIGMA_PER_PACK] [--lambda L] [--subgroup N]\n"
    "                   [--format table|json]\n"
    "\n"
    "Chooses the detector thresholds for one line from ARL theory and prints them with\n"
    "the false-alarm rate and the expected detection delay they give.\n"
    "\n"
    "  --rate R                 packs per minute while the line runs (required)\n"
    "  --false-alarms-per-day F false alarms per line per 24 h of running (default 1)\n"
    "  --shift S                smallest mean step worth catching, in sigma of single\n"
    "                           packs (default 1)\n"
    "  --drift D                slow drift the EWMA is tuned for, sigma per pack\n"
    "                           (default 0.005 = 1 sigma per 200 packs)\n"
    "  --lambda L               fix the drift EWMA's lambda (default: best of a grid)\n"
    "  --subgroup N             packs per subgroup mean for the run rules (default 1;\n"
    "                           e.g. the head count, one point per turn of the filler)\n"
    "  --format F               table (default) or json\n"
    "\n"
    "ARLs are exact for normal, independent packs with known level and sigma\n"
    "(Brook & Evans / integral equation for CUSUM and EWMA). Autocorrelation and an\n"
    "estimated baseline shorten the real in-control ARL; the line monitor allows\n"
    "for that separately.\n";

int Fail(std::ostream& err, std::string_view message) {
  err << "heft design: " << message << "\n";
  return 2;
}

bool ParseNumber(const std::string& text, double* value) {
  const char* begin = text.data();
  const char* end = begin + text.size();
  const auto [ptr, ec] = std::from_chars(begin, end, *value);
  return ec == std::errc() && ptr == end && std::isfinite(*value);
}

struct Naive {
  double arl_points = 0;
  double arl_packs = 0;
  double false_alarms_per_day = 0;
  double delay_packs = 0;
};

std::string Hours(double packs, double rate) {
  const double hours = packs / rate / 60.0;
  if (hours < 1.0 / 60.0) return fmt::format("{:.1f} s", hours * 3600.0);
  if (hours < 1.0) return fmt::format("{:.1f} min", hours * 60.0);
  if (hours < 48.0) return fmt::format("{:.1f} h", hours);
  return fmt::format("{:.1f} days", hours / 24.0);
}

std::string Seconds(double packs, double rate) {
  const double seconds = packs / rate * 60.0;
  if (seconds >= 120.0) return Hours(packs, rate);
  return fmt::format("{:.1f} s", seconds);
}

std::string Packs(double packs) {
  if (packs >= 1e5) return fmt::format("{:.0f}", packs);
  if (packs >= 100) return fmt::format("{:.1f}", packs);
  return fmt::format("{:.2f}", packs);
}

int RunDesign(const Args& args, std::ostream& out, std::ostream& err) {
  ArgReader reader(args);
  DesignTargets targets;
  bool have_rate = false;
  int subgroup = 1;
  std::string format = "table";
  while (!reader.Done()) {
    std::string value;
    double number = 0;
    if (reader.Flag("--help") || reader.Flag("-h")) {
      out << kUsage;
      return 0;
    } else if (reader.Option("--rate", &value)) {
      if (!ParseNumber(value, &number) || number <= 0) {
        return Fail(err, "--rate '" + value + "' must be a number of packs per minute above 0");
      }
      targets.packs_per_minute = number;
      have_rate = true;
    } else if (reader.Option("--false-alarms-per-day", &value)) {
      if (!ParseNumber(value, &number) || number <= 0) {
        return Fail(err, "--false-alarms-per-day '" + value + "' must be a number above 0");
      }
      targets.false_alarms_per_day = number;
    } else if (reader.Option("--shift", &value)) {
      if (!ParseNumber(value, &number) || number <= 0 || number > 10) {
        return Fail(err, "--shift '" + value + "' must be a number of sigma in (0, 10]");
      }
      targets.min_shift_sigma = number;
    } else if (reader.Option("--drift", &value)) {
      if (!ParseNumber(value, &number) || number <= 0 || number > 1) {
        return Fail(err, "--drift '" + value + "' must be sigma per pack in (0, 1]");
      }
      targets.drift_sigma_per_pack = number;
    } else if (reader.Option("--lambda", &value)) {
      if (!ParseNumber(value, &number) || number <= 0 || number > 1) {
        return Fail(err, "--lambda '" + value + "' must be in (0, 1]");
      }
      targets.ewma_lambda = number;
    } else if (reader.Option("--subgroup", &value)) {
      double n = 0;
      if (!ParseNumber(value, &n) || n < 1 || n > 1000 || n != std::floor(n)) {
        return Fail(err, "--subgroup '" + value + "' must be a whole number from 1 to 1000");
      }
      subgroup = static_cast<int>(n);
    } else if (reader.Option("--format", &value)) {
      if (value != "table" && value != "json") {
        return Fail(err, "--format '" + value + "' must be table or json");
      }
      format = value;
    } else if (!reader.error.empty()) {
      return Fail(err, reader.error);
    } else {
      return Fail(err, "unexpected argument '" + reader.Peek() + "' (see heft design --help)");
    }
  }
  if (!have_rate) return Fail(err, "--rate PACKS_PER_MIN is required (see heft design --help)");

  const auto started = std::chrono::steady_clock::now();
  DetectorDesign d;
  if (Status s = DesignLineDetectors(targets, &d); !s.ok()) return Fail(err, s.message());
  const double design_ms =
      std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - started).count();

  const double rate = targets.packs_per_minute;
  const double packs_per_day = rate * 60.0 * 24.0;
  const double shift = d.min_shift_sigma;
  // Textbook rules run as if each pack (or subgroup mean) were a point on a chart.
  Naive three_sigma;
  three_sigma.arl_points = ShewhartArl(3.0, 0.0);
  three_sigma.arl_packs = three_sigma.arl_points;
  three_sigma.false_alarms_per_day = packs_per_day / three_sigma.arl_packs;
  three_sigma.delay_packs = ShewhartArl(3.0, shift);
  Naive we;
  const RunRuleArl we0 = WesternElectricArl(WesternElectricRules{}, 0.0);
  const RunRuleArl we1 =
      WesternElectricArl(WesternElectricRules{}, shift * std::sqrt(static_cast<double>(subgroup)));
  we.arl_points = we0.arl;
  we.arl_packs = we0.arl * subgroup;
  we.false_alarms_per_day = packs_per_day / we.arl_packs;
  we.delay_packs = we1.arl * subgroup;

  if (format == "json") {
    nlohmann::json j;
    j["rate_packs_per_min"] = rate;
    j["false_alarms_per_day"] = targets.false_alarms_per_day;
    j["shift_sigma"] = shift;
    j["drift_sigma_per_pack"] = d.drift_sigma_per_pack;
    j["subgroup"] = subgroup;
    j["arl0_packs"] = d.arl0_packs;
    j["arl0_hours"] = d.arl0_packs / rate / 60.0;
    j["design_ms"] = design_ms;
    auto detector = [&](double arl0, double delay) {
      return nlohmann::json{{"arl0_packs", arl0},
                            {"arl0_hours", arl0 / rate / 60.0},
                            {"delay_packs", delay},
                            {"delay_seconds", delay / rate * 60.0}};
    };
    nlohmann::json cusum = detector(d.cusum_arl0, d.cusum_delay_packs);
    cusum["k"] = d.cusum_k;
    cusum["h"] = d.cusum_h;
    cusum["head_start"] = d.cusum_head_start;
    cusum["arl0_fir_packs"] = d.cusum_arl0_fir;
    cusum["delay_fir_packs"] = d.cusum_delay_fir_packs;
    cusum["delay_steady_packs"] = d.cusum_delay_steady_packs;
    cusum["ramp_delay_packs"] = d.cusum_ramp_delay_packs;
    j["cusum"] = cusum;
    nlohmann::json ewma = detector(d.ewma_arl0, d.ewma_delay_packs);
    ewma["lambda"] = d.ewma_lambda;
    ewma["limit_l"] = d.ewma_limit;
    ewma["shift_sigma"] = d.ewma_shift_sigma;
    ewma["delay_steady_packs"] = d.ewma_delay_steady_packs;
    ewma["ramp_delay_packs"] = d.ewma_ramp_delay_packs;
    j["ewma"] = ewma;
    nlohmann::json individuals = detector(d.individuals_arl0, d.individuals_delay_packs);
    individuals["limit_sigma"] = d.individuals_limit;
    j["individuals"] = individuals;
    auto naive = [&](const Naive& n) {
      return nlohmann::json{{"arl0_points", n.arl_points},
                            {"arl0_packs", n.arl_packs},
                            {"false_alarms_per_day", n.false_alarms_per_day},
                            {"delay_packs", n.delay_packs}};
    };
    j["naive_three_sigma_per_pack"] = naive(three_sigma);
    j["naive_western_electric"] = naive(we);
    out << j.dump(2) << "\n";
    return 0;
  }

  out << fmt::format(
      "Detector design for {:g} packs/min, at most {:g} false alarm(s) per 24 h of running, "
      "smallest shift {:g} sigma\n\n",
      rate, targets.false_alarms_per_day, shift);
  out << fmt::format("False-alarm budget: in-control ARL {} packs for the whole line ({})\n",
                     Packs(d.arl0_packs), Hours(d.arl0_packs, rate));
  out << fmt::format(
      "  shared out: CUSUM 1/2, individuals 1/4, drift EWMA 1/8, other detectors 1/8\n\n");
  out << fmt::format("{:<12} {:<34} {:>22} {:>26}\n", "detector", "parameters", "in-control ARL",
                     fmt::format("delay at {:g} sigma", shift));
  auto row = [&](const std::string& name, const std::string& params, double arl0, double delay,
                 double delay_shift) {
    out << fmt::format("{:<12} {:<34} {:>22} {:>26}\n", name, params,
                       Packs(arl0) + " (" + Hours(arl0, rate) + ")",
                       Packs(delay) + " packs (" + Seconds(delay, rate) + ")" +
                           (delay_shift != shift ? fmt::format(" @{:g}", delay_shift) : ""));
  };
  row("shift", fmt::format("CUSUM k={:.3f} h={:.3f}", d.cusum_k, d.cusum_h), d.cusum_arl0,
      d.cusum_delay_packs, shift);
  row("drift", fmt::format("EWMA lambda={:g} L={:.3f}", d.ewma_lambda, d.ewma_limit), d.ewma_arl0,
      d.ewma_delay_packs, d.ewma_shift_sigma);
  row("gross", fmt::format("individuals |z| > {:.3f}", d.individuals_limit), d.individuals_arl0,
      d.individuals_delay_packs, shift);
  out << "\nMore about the delays (packs):\n";
  out << fmt::format(
      "  CUSUM, {:g} sigma step: {} from a clean start, {} after a restart with head start "
      "h/2 = {:.3f} (FIR), {} when the step comes mid-run\n",
      shift, Packs(d.cusum_delay_packs), Packs(d.cusum_delay_fir_packs), d.cusum_head_start,
      Packs(d.cusum_delay_steady_packs));
  out << fmt::format("  EWMA, {:g} sigma step: {} from a clean start, {} mid-run\n",
                     d.ewma_shift_sigma, Packs(d.ewma_delay_packs),
                     Packs(d.ewma_delay_steady_packs));
  out << fmt::format(
      "  ramp of {:g} sigma per pack starting mid-run: EWMA {} packs ({}), CUSUM {} packs ({})\n",
      d.drift_sigma_per_pack, Packs(d.ewma_ramp_delay_packs),
      Seconds(d.ewma_ramp_delay_packs, rate), Packs(d.cusum_ramp_delay_packs),
      Seconds(d.cusum_ramp_delay_packs, rate));
  out << fmt::format("  the CUSUM's in-control ARL from the head start: {} packs (approx.)\n",
                     Packs(d.cusum_arl0_fir));
  out << "\nWhy not the textbook rules on every pack:\n";
  out << fmt::format(
      "  3-sigma rule on each pack: in-control ARL {:.1f} packs ({}) -> {:.0f} false alarms "
      "per day; delay at {:g} sigma {} packs\n",
      three_sigma.arl_packs, Hours(three_sigma.arl_packs, rate), three_sigma.false_alarms_per_day,
      shift, Packs(three_sigma.delay_packs));
  out << fmt::format(
      "  Western Electric rules 1-4 on {}: in-control ARL {:.2f} points = {} packs ({}) -> "
      "{:.0f} false alarms per day; delay {} packs\n",
      subgroup == 1 ? std::string("each pack") : fmt::format("means of {} packs", subgroup),
      we.arl_points, Packs(we.arl_packs), Hours(we.arl_packs, rate), we.false_alarms_per_day,
      Packs(we.delay_packs));
  out << fmt::format(
      "\nARLs: exact for independent normal packs with known level and sigma (CUSUM and EWMA by "
      "the integral equation / Brook & Evans; Western Electric by Markov chain). Design took "
      "{:.1f} ms.\n",
      design_ms);
  return 0;
}

}  // namespace
}  // namespace heft::cli

HEFT_COMMAND("design", "detector thresholds and delays from a false-alarm budget (ARL theory)",
             heft::cli::RunDesign);
