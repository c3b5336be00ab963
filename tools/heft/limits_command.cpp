// limits_command.cpp — `heft limits`: the tolerance (TNE/MAV), T1 and T2
// limits and the reference-test plans of a rule table for one nominal quantity.
//
// Thin: finds and loads the rule table (io/rule_table_loader), computes with
// core/comply, prints a table or JSON. Exit 0 on success, 2 on usage, file or
// table errors.
#include <algorithm>
#include <cctype>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <iostream>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "command.h"
#include "core/comply/mean_criterion.h"
#include "core/comply/net_content_limits.h"
#include "core/comply/reference_test.h"
#include "core/comply/rule_table.h"
#include "io/rule_table_loader.h"

namespace heft::cli {
namespace {

namespace fs = std::filesystem;
using comply::NetContentLimits;
using comply::RuleTable;

constexpr const char* kDefaultRules = "eu-average-quantity.yaml";
constexpr const char* kCaution =
    "These figures are the packer's own control; they do not replace checks by the legal "
    "metrology authority, and the regulation texts in force locally prevail over the tables "
    "shipped here.";

void Help(std::ostream& out) {
  out << "usage: heft limits --nominal GRAMS [--rules FILE|NAME] [--lot-size N]\n"
         "                   [--format table|json] [--allow-unconfirmed]\n\n"
         "Prints, for a nominal quantity, the tolerable negative error (TNE) or MAV of the\n"
         "rule table, the T1 limit (nominal - TNE), the T2 limit (nominal - 2 TNE) and the\n"
         "reference-test sampling plans with their mean-criterion factors k.\n\n"
         "  --rules              rule table file, or a name under the rules folder\n"
         "                       (default "
      << kDefaultRules
      << "; folder: $HEFT_RULES_DIR, else\n"
         "                       config/rules found from the program or working directory)\n"
         "  --lot-size N         show only the plans for a lot of N packs\n"
         "  --allow-unconfirmed  also use rows the table marks unconfirmed (from memory)\n\n"
      << kCaution << "\n";
}

// Folders that may hold the shipped tables, most specific first.
std::vector<fs::path> RulesDirs() {
  std::vector<fs::path> dirs;
  if (const char* env = std::getenv("HEFT_RULES_DIR"); env && *env) dirs.emplace_back(env);
  std::error_code ec;
  const fs::path exe = fs::read_symlink("/proc/self/exe", ec);
  if (!ec) {
    const fs::path bin = exe.parent_path();
    // Build trees put the tool in <build>/tools; installs in <prefix>/bin.
    for (const char* rel : {"../config/rules", "../../config/rules", "../../../config/rules",
                            "../share/heft/rules"}) {
      dirs.push_back(bin / rel);
    }
  }
  dirs.emplace_back("config/rules");
  dirs.emplace_back("../config/rules");
  return dirs;
}

// Resolves --rules (or the default) to a file; *tried lists what was looked at.
std::optional<fs::path> FindRules(const std::string& given, std::vector<std::string>* tried) {
  std::error_code ec;
  if (!given.empty()) {
    if (fs::is_regular_file(given, ec)) return fs::path(given);
    tried->push_back(given);
    if (given.find('/') != std::string::npos) return std::nullopt;
  }
  const std::string name = given.empty() ? kDefaultRules : given;
  std::vector<std::string> names = {name};
  if (name.size() < 5 || name.compare(name.size() - 5, 5, ".yaml") != 0) {
    names.push_back(name + ".yaml");
  }
  for (const fs::path& dir : RulesDirs()) {
    for (const std::string& n : names) {
      const fs::path candidate = dir / n;
      if (fs::is_regular_file(candidate, ec)) return candidate.lexically_normal();
      tried->push_back(candidate.lexically_normal().string());
    }
  }
  return std::nullopt;
}

// Exact decimal text of a fixed-point mass: at least one decimal, no trailing zeros.
std::string Grams(std::int64_t units) {
  const bool negative = units < 0;
  const std::uint64_t u = negative ? static_cast<std::uint64_t>(-units) : units;
  const std::uint64_t whole = u / comply::kUnitsPerGram;
  std::string frac = std::to_string(u % comply::kUnitsPerGram);
  frac.insert(0, 4 - frac.size(), '0');
  while (frac.size() > 1 && frac.back() == '0') frac.pop_back();
  return (negative ? "-" : "") + std::to_string(whole) + "." + frac;
}

std::string Percent(std::int64_t thousandths) {
  std::string text = Grams(thousandths * 10);  // same trimming, 3 decimals
  if (text.size() > 2 && text.compare(text.size() - 2, 2, ".0") == 0) text.resize(text.size() - 2);
  return text;
}

std::string Tag(const comply::Provenance& p) {
  // Appended piecewise: GCC 12 warns falsely (-Wrestrict) on "[" + std::string(...).
  std::string text = "[";
  text += comply::SourceTagName(p.tag);
  text += "]";
  if (!p.confirmed) text += " UNCONFIRMED";
  return text;
}

std::string LotRange(const comply::SamplingPlan& plan) {
  if (!plan.lot_max) return std::to_string(plan.lot_min) + " or more";
  return std::to_string(plan.lot_min) + "-" + std::to_string(*plan.lot_max);
}

std::string Fixed(double value, int decimals) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", decimals, value);
  return buf;
}

struct PlanRow {
  const comply::PlanSet* set;
  const comply::SamplingPlan* plan;
};

std::vector<PlanRow> SelectPlans(const RuleTable& table, std::optional<std::int64_t> lot_size,
                                 bool allow_unconfirmed) {
  std::vector<PlanRow> rows;
  for (const comply::PlanSet& set : table.plan_sets) {
    for (const comply::SamplingPlan& plan : set.plans) {
      if (!plan.provenance.confirmed && !allow_unconfirmed) continue;
      if (lot_size && !plan.Covers(*lot_size)) continue;
      rows.push_back({&set, &plan});
    }
  }
  return rows;
}

nlohmann::json ProvenanceJson(const comply::Provenance& p) {
  return {{"source", p.source},
          {"tag", std::string(comply::SourceTagName(p.tag))},
          {"confirmed", p.confirmed}};
}

double ToGrams(std::int64_t units) { return comply::UnitsToGrams(units); }

int RunLimits(const Args& args, std::ostream& out, std::ostream& err) {
  ArgReader reader(args);
  std::string nominal_text, rules_arg, lot_text, format = "table";
  bool allow_unconfirmed = false;
  while (!reader.Done()) {
    std::string value;
    if (reader.Flag("--help") || reader.Flag("-h")) {
      Help(out);
      return 0;
    }
    if (reader.Option("--nominal", &value)) {
      nominal_text = value;
    } else if (reader.Option("--rules", &value)) {
      rules_arg = value;
    } else if (reader.Option("--lot-size", &value)) {
      lot_text = value;
    } else if (reader.Option("--format", &value)) {
      format = value;
    } else if (reader.Flag("--allow-unconfirmed")) {
      allow_unconfirmed = true;
    } else if (!reader.error.empty()) {
      err << "heft limits: " << reader.error << "\n";
      return 2;
    } else {
      err << "heft limits: unknown argument '" << reader.Peek() << "' (see heft limits --help)\n";
      return 2;
    }
  }
  if (nominal_text.empty()) {
    err << "heft limits: --nominal GRAMS is required (see heft limits --help)\n";
    return 2;
  }
  if (format != "table" && format != "json") {
    err << "heft limits: --format must be table or json, not '" << format << "'\n";
    return 2;
  }
  char* end = nullptr;
  errno = 0;
  const double nominal = std::strtod(nominal_text.c_str(), &end);
  if (end == nominal_text.c_str() || *end != '\0' || errno == ERANGE || !std::isfinite(nominal)) {
    err << "heft limits: --nominal: '" << nominal_text << "' is not a number of grams\n";
    return 2;
  }
  std::optional<std::int64_t> lot_size;
  if (!lot_text.empty()) {
    errno = 0;
    const long long n = std::strtoll(lot_text.c_str(), &end, 10);
    if (end == lot_text.c_str() || *end != '\0' || errno == ERANGE || n < 1) {
      err << "heft limits: --lot-size: '" << lot_text << "' is not a positive whole number\n";
      return 2;
    }
    lot_size = n;
  }

  std::vector<std::string> tried;
  const std::optional<fs::path> rules_path = FindRules(rules_arg, &tried);
  if (!rules_path) {
    err << "heft limits: rule table not found; looked at:\n";
    for (const auto& t : tried) err << "  " << t << "\n";
    err << "give --rules FILE or set HEFT_RULES_DIR\n";
    return 2;
  }
  RuleTable table;
  std::vector<std::string> errors;
  if (Status s = LoadRuleTableFile(rules_path->string(), &table, &errors); !s.ok()) {
    err << "heft limits: the rule table has errors:\n";
    for (const auto& e : errors) err << "  " << e << "\n";
    return 2;
  }

  NetContentLimits limits;
  const Status limit_status = comply::ComputeLimits(table, nominal, allow_unconfirmed, &limits);
  // A table whose tolerance rows are all unconfirmed (us-hb133) still has a
  // confirmed mean rule: show that much rather than nothing.
  bool partial = false;
  if (!limit_status.ok()) {
    NetContentLimits probe;
    std::int64_t units = 0;
    if (comply::GramsToUnits(nominal, &units).ok() &&
        comply::ComputeLimits(table, nominal, true, &probe).ok() && !allow_unconfirmed) {
      partial = true;
      limits = NetContentLimits{};
      limits.nominal_units = units;
      limits.nominal_g = comply::UnitsToGrams(units);
    } else {
      err << "heft limits: " << limit_status.message() << "\n";
      return 2;
    }
  }

  std::vector<std::string> notes;
  if (partial) {
    notes.push_back("The " + table.tolerance_name + " rows of " + table.id +
                    " are unconfirmed (from memory): no " + table.tolerance_name +
                    ", T1 or T2 shown. --allow-unconfirmed shows them, flagged.");
  } else {
    if (limits.band->provenance.tag == comply::SourceTag::kMemory) {
      notes.push_back("The " + table.tolerance_name +
                      " band used rests on a source recalled from memory [M] (" +
                      limits.band->provenance.source + "); check it before relying on it.");
    }
    if (!limits.band->provenance.confirmed) {
      notes.push_back("The " + table.tolerance_name +
                      " band used is marked unconfirmed; shown only because of "
                      "--allow-unconfirmed.");
    }
  }
  const std::vector<PlanRow> plans = SelectPlans(table, lot_size, allow_unconfirmed);
  bool skipped_unconfirmed_plans = false;
  for (const auto& set : table.plan_sets) {
    for (const auto& plan : set.plans) {
      if (!plan.provenance.confirmed && !allow_unconfirmed &&
          (!lot_size || plan.Covers(*lot_size))) {
        skipped_unconfirmed_plans = true;
      }
    }
  }
  if (skipped_unconfirmed_plans) {
    notes.push_back("Sampling plans marked unconfirmed are not shown (--allow-unconfirmed).");
  }
  if (lot_size && plans.empty()) {
    notes.push_back("No sampling plan of this table covers a lot of " + std::to_string(*lot_size) +
                    " packs.");
  }

  const std::string tol_key = [&] {
    std::string k = table.tolerance_name;
    for (char& c : k) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    return k;
  }();

  if (format == "json") {
    nlohmann::json j;
    j["rules"] = {{"id", table.id}, {"name", table.name}, {"file", rules_path->string()}};
    j["nominal"] = limits.nominal_g;
    j["tolerance_name"] = table.tolerance_name;
    if (partial) {
      j["tolerance"] = nullptr;
      j[tol_key] = nullptr;
      j["t1_limit"] = nullptr;
      j["t2_limit"] = nullptr;
    } else {
      j["tolerance"] = limits.tolerance_g;
      j[tol_key] = limits.tolerance_g;
      j[tol_key + "_raw"] = limits.raw_tolerance_g;
      j["rounded"] = limits.rounded;
      j["t1_limit"] = limits.t1_g;
      j["t2_limit"] = limits.t2_g ? nlohmann::json(*limits.t2_g) : nlohmann::json(nullptr);
      nlohmann::json band = ProvenanceJson(limits.band->provenance);
      band["from_g"] = ToGrams(limits.band->from_units);
      band["to_g"] = limits.band->to_units ? nlohmann::json(ToGrams(*limits.band->to_units))
                                           : nlohmann::json(nullptr);
      if (limits.band->percent) {
        band["percent"] = static_cast<double>(limits.band->value) / comply::kPercentScale;
      } else {
        band["grams"] = ToGrams(limits.band->value);
      }
      j["band"] = band;
    }
    j["packer_rules"] = nlohmann::json::array();
    for (const auto& rule : table.rules) {
      nlohmann::json r = ProvenanceJson(rule.provenance);
      r["id"] = rule.id;
      r["kind"] = std::string(comply::PackerRuleKindName(rule.kind));
      r["text"] = rule.text;
      if (rule.kind == comply::PackerRuleKind::kT1FractionAtMost) {
        r["limit_percent"] = rule.limit_fraction * 100.0;
      }
      j["packer_rules"].push_back(r);
    }
    j["lot_size"] = lot_size ? nlohmann::json(*lot_size) : nlohmann::json(nullptr);
    j["plans"] = nlohmann::json::array();
    for (const PlanRow& row : plans) {
      const comply::SamplingPlan& plan = *row.plan;
      nlohmann::json p = ProvenanceJson(plan.provenance);
      p["set"] = row.set->id;
      p["set_name"] = row.set->name;
      p["destructive"] = row.set->destructive;
      p["lots_from"] = plan.lot_min;
      p["lots_to"] = plan.lot_max ? nlohmann::json(*plan.lot_max) : nlohmann::json(nullptr);
      p["whole_lot"] = plan.whole_lot;
      if (plan.whole_lot) p["max_defective_percent"] = plan.whole_lot_max_defective_fraction * 100;
      p["stages"] = nlohmann::json::array();
      int cumulative = 0;
      for (const auto& stage : plan.stages) {
        cumulative += stage.size;
        p["stages"].push_back({{"size", stage.size},
                               {"cumulative", cumulative},
                               {"accept", stage.accept},
                               {"reject", stage.reject}});
      }
      if (plan.mean_test) {
        nlohmann::json m = ProvenanceJson(plan.mean_test->provenance);
        m["n"] = plan.mean_test->n;
        m["quantile"] = plan.mean_test->quantile;
        m["k"] = comply::PlanMeanFactor(*plan.mean_test);
        m["published_k"] = plan.mean_test->published_k
                               ? nlohmann::json(*plan.mean_test->published_k)
                               : nlohmann::json(nullptr);
        p["mean_test"] = m;
      } else {
        p["mean_test"] = nullptr;
      }
      j["plans"].push_back(p);
    }
    j["notes"] = notes;
    j["caution"] = kCaution;
    if (!table.caution.empty() && table.caution != kCaution) j["table_caution"] = table.caution;
    out << j.dump(2) << "\n";
    return 0;
  }

  // Table format.
  out << table.name << "\n  rules: " << rules_path->string() << "\n\n";
  out << "  nominal quantity Qn   " << Grams(limits.nominal_units) << " g\n";
  if (!partial) {
    std::string how;
    if (limits.band->percent) {
      how = Percent(limits.band->value) + " % of Qn";
      if (limits.rounded) {
        how += " = " +
               (limits.raw_numerator % limits.raw_denominator == 0
                    ? Grams(limits.raw_numerator / limits.raw_denominator)
                    : Fixed(limits.raw_tolerance_g, 6)) +
               " g, rounded up to the next " + Grams(table.percent_round_up_units) + " g";
      }
    } else {
      how = "fixed for this band";
    }
    std::string band_text = Grams(limits.band->from_units) + "-" +
                            (limits.band->to_units ? Grams(*limits.band->to_units) : "") + " g";
    out << "  " << table.tolerance_name
        << std::string(22 - std::min<std::size_t>(21, table.tolerance_name.size()), ' ')
        << Grams(limits.tolerance_units) << " g   (" << how << "; band " << band_text << ", "
        << limits.band->provenance.source << " " << Tag(limits.band->provenance) << ")\n";
    out << "  T1 limit              " << Grams(limits.t1_units) << " g   (Qn - "
        << table.tolerance_name << "; a pack below is T1, \"defective\")\n";
    if (limits.t2_units) {
      out << "  T2 limit              " << Grams(*limits.t2_units) << " g   (Qn - "
          << *table.t2_multiple << " x " << table.tolerance_name << "; no pack may be below)\n";
    }
  }
  out << "\nPacker's rules for each lot:\n";
  for (const auto& rule : table.rules) {
    out << "  - " << rule.text << "  " << Tag(rule.provenance) << " " << rule.provenance.source
        << "\n";
  }
  out << "\nReference-test plans"
      << (lot_size ? " for a lot of " + std::to_string(*lot_size) + " packs" : "")
      << " (a defective is a pack below T1; numbers are cumulative):\n";
  const comply::PlanSet* last_set = nullptr;
  for (const PlanRow& row : plans) {
    const comply::SamplingPlan& plan = *row.plan;
    if (row.set != last_set) {
      out << "  " << row.set->name << "\n";
      last_set = row.set;
    }
    out << "    lots " << LotRange(plan) << ": ";
    if (plan.whole_lot) {
      out << "every pack; defectives at most "
          << Fixed(plan.whole_lot_max_defective_fraction * 100, 1) << " % of the lot";
    } else {
      int cumulative = 0;
      for (std::size_t i = 0; i < plan.stages.size(); ++i) {
        const auto& stage = plan.stages[i];
        cumulative += stage.size;
        if (i > 0) out << "; ";
        out << (plan.stages.size() > 1 ? (i == 0 ? "1st " : "2nd ") : "") << "sample "
            << stage.size;
        if (i > 0) out << " (total " << cumulative << ")";
        out << " accept <= " << stage.accept << ", reject >= " << stage.reject;
      }
    }
    out << "  " << Tag(plan.provenance) << "\n";
    if (plan.mean_test) {
      const auto& mt = *plan.mean_test;
      if (mt.n == 0) {
        out << "      mean of all packs >= Qn";
      } else {
        out << "      mean of " << mt.n << " packs >= Qn - k*s, k = t(" << Fixed(mt.quantile, 3)
            << "; " << mt.n - 1 << ")/sqrt(" << mt.n
            << ") = " << Fixed(comply::PlanMeanFactor(mt), 4);
        if (mt.published_k) out << " (published " << Fixed(*mt.published_k, 3) << ")";
      }
      out << "  " << Tag(mt.provenance) << "\n";
    }
  }
  if (plans.empty()) out << "  (none)\n";
  if (!notes.empty()) {
    out << "\nNotes:\n";
    for (const auto& n : notes) out << "  - " << n << "\n";
  }
  out << "\n" << kCaution << "\n";
  if (!table.caution.empty() && table.caution != kCaution) out << table.caution << "\n";
  return 0;
}

}  // namespace

HEFT_COMMAND("limits", "TNE, T1/T2 limits and reference-test plans for a nominal quantity",
             RunLimits);

}  // namespace heft::cli
