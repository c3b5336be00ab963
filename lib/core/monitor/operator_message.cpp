#include "core/monitor/operator_message.h"

#include <cmath>
#include <cstdio>
#include <string>

#include "core/record/native_record.h"

namespace heft {
namespace {

std::string Grams(double g, bool sign = false) {
  char buf[48];
  std::snprintf(buf, sizeof buf, sign ? "%+.1f g" : "%.1f g", g);
  return buf;
}

std::string Sigma(double s) {
  char buf[48];
  std::snprintf(buf, sizeof buf, "%+.1f sigma", s);
  return buf;
}

// "06:12:03" from an epoch-ms time (UTC): short enough for a line display.
std::string Clock(std::int64_t time_ms) {
  char iso[32];
  FormatTimeMs(time_ms, iso);
  return std::string(iso + 11, iso + 19) + "Z";
}

std::string Since(const Finding& f) {
  if (!f.onset) return "";
  std::string s = " since pack #" + std::to_string(*f.onset);
  if (f.onset_time_ms) s += " (" + Clock(*f.onset_time_ms) + ")";
  return s;
}

// Effect on giveaway and the average rule, when the nominal is known.
std::string Effect(const Finding& f, const LineSettings& line) {
  if (!line.nominal_g || !f.level_g) return "";
  const double over = *f.level_g - *line.nominal_g;
  if (over < 0.0) {
    return " Level is " + Grams(-over) + " BELOW the nominal " + Grams(*line.nominal_g) +
           ": the average rule is at risk.";
  }
  return " Giveaway now about " + Grams(over) + " per pack.";
}

}  // namespace

std::string OperatorMessage(const Finding& f, const LineSettings& line) {
  const std::string where = f.line + (f.head ? " head " + std::to_string(*f.head) : "") + ": ";
  const bool raised = f.transition == Transition::kRaised;
  switch (f.kind) {
    case FindingKind::kShift:
      if (!raised) {
        return where + "level back near its baseline" +
               (f.level_g ? " (" + Grams(*f.level_g) + " over recent packs)" : "") + ".";
      }
      return where + "fill level " + (f.size_g && *f.size_g < 0 ? "dropped " : "jumped ") +
             (f.size_g ? Grams(*f.size_g, true) : "") +
             (f.size_sigma ? " (" + Sigma(*f.size_sigma) + ")" : "") +
             (f.level_g ? " to about " + Grams(*f.level_g) : "") + Since(f) + "." +
             Effect(f, line) +
             " Check first: a recent set-point change or adjustment, product supply to the "
             "filler, a changeover.";
    case FindingKind::kSettling:
      if (raised) {
        return where + "line started; learning its level. Mean alarms are held until it settles.";
      }
      return where + "settled" + (f.level_g ? " at " + Grams(*f.level_g) : "") +
             (f.end ? " from pack #" + std::to_string(*f.end) : "") + "; monitoring." +
             Effect(f, line);
    case FindingKind::kSilence:
      if (raised) {
        return where + "no packs" + (f.onset_time_ms ? " since " + Clock(*f.onset_time_ms) : "") +
               ". Check first: is the line meant to be stopped? Then the checkweigher and its "
               "link.";
      }
      return where + "packs are arriving again; the line will settle before mean alarms resume.";
    case FindingKind::kOutlier:
      if (raised) {
        return where + "pack of " + (f.level_g ? Grams(*f.level_g) : std::string("?")) +
               (f.detector == "gross_pack" ? " is a gross pack (empty, double or misweighed)"
                                           : " is far outside the usual spread") +
               Since(f) +
               ". Check first: the checkweigher's reject station and the pack "
               "transfer; a single pack needs no action.";
      }
      return where + "no more stray packs" +
             (f.size_g ? " (" + std::to_string(static_cast<long long>(std::llround(*f.size_g))) +
                             " in the burst)"
                       : "") +
             ".";
    case FindingKind::kDrift: {
      if (!raised) return where + "level back near its baseline; the drift is over.";
      // The slope fitted at the moment of detection runs high (the signal picks
      // the noisiest stretch), so the message gives the change so far; the
      // event's slope_g_per_h field keeps the fitted rate for engineers.
      const std::string how = f.size_g ? " " + Grams(*f.size_g, true) + " so far" : "";
      return where + "level drifting" + how + Since(f) + "." + Effect(f, line) +
             " Check first: product density, hopper level.";
    }
    case FindingKind::kOscillation: {
      if (!raised) return where + "swing has stopped.";
      if (f.head && f.size_g) {  // one head off against the others of its turn
        return where + "fills " + Grams(std::fabs(*f.size_g)) +
               (*f.size_g < 0 ? " light" : " heavy") +
               (f.size_sigma ? " (" + Sigma(*f.size_sigma) + ")" : "") +
               " against the other heads" + Since(f) +
               ". Check first: this head's valve or nozzle, then product build-up on it.";
      }
      char period[96] = "";
      if (f.period_packs && f.period_s) {
        std::snprintf(period, sizeof period, " every %.0f packs (about %.0f s)", *f.period_packs,
                      *f.period_s);
      } else if (f.period_packs) {
        std::snprintf(period, sizeof period, " every %.0f packs", *f.period_packs);
      }
      const std::string amount =
          f.size_g ? ", about " + Grams(std::fabs(*f.size_g)) + " either way" : "";
      const bool alternating = f.period_packs && *f.period_packs < 2.5;
      return where + "weights swinging" + period + amount + Since(f) + "." +
             (alternating ? " Check first: neighbouring heads or lanes that fill differently."
                          : " Check first: the fill-weight controller's gain (hunting), then "
                            "one head's valve or nozzle.");
    }
    case FindingKind::kSpread:
      return where + (raised
                          ? "spread rising" + Since(f) + ". Check first: worn valves, product flow."
                          : "spread back to normal.");
    case FindingKind::kStuck:
      return where + (raised ? "the same reading repeats" + Since(f) +
                                   ". Check first: the checkweigher's load cell and its link."
                             : "readings vary again.");
    case FindingKind::kCompliance: {
      if (!raised) return where + "net-content risk has eased.";
      // The detector names the reason (compliance_alert.h).
      std::string why;
      if (f.detector == "mean-below-nominal") {
        why = "the lot mean is likely to end BELOW the nominal";
      } else if (f.detector == "mean-near-nominal") {
        why = "the lot mean may end below the nominal";
      } else if (f.detector == "t1-share-over-limit") {
        why = "packs short by more than the TNE (T1) are likely to exceed their allowed share";
      } else if (f.detector == "t1-share-near-limit") {
        why = "packs short by more than the TNE (T1) near their allowed share";
      } else if (f.detector == "t2-seen") {
        why = "a pack short by more than twice the TNE (T2)";
      } else {
        why = "net-content risk";
      }
      return where + (f.severity == Severity::kAlarm ? "COMPLIANCE ALARM: " : "compliance: ") +
             why + (f.onset ? " (lot from pack #" + std::to_string(*f.onset) + ")" : "") + "." +
             (f.level_g ? " Lot mean " + Grams(*f.level_g) : std::string()) +
             (line.nominal_g ? " against nominal " + Grams(*line.nominal_g) + "." : ".") +
             " Check first: the fill target and the filler's heads. (The packer's own control, "
             "not a legal check.)";
    }
  }
  return where + std::string(KindName(f.kind));
}

}  // namespace heft
