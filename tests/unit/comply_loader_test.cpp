// Tests of the rule-table loader: the shipped tables load, and bad tables give
// file:line:column errors that say where and why.
#include <catch2/catch.hpp>

#include <string>
#include <vector>

#include "core/comply/rule_table.h"
#include "io/rule_table_loader.h"

namespace {

using heft::comply::RuleTable;

// A minimal valid table; tests break one thing at a time.
const char* kGood = R"(id: test
name: Test table
tolerance:
  name: TNE
  bands:
    - {from_g: 5, to_g: 50, percent: 9, source: "76/211/EEC Annex I §2.4", tag: S}
    - {from_g: 50, to_g: 100, grams: 4.5, source: "76/211/EEC Annex I §2.4", tag: S}
  round_percent_up_to_g: 0.1
  rounding_source: "Allegato I"
  rounding_tag: S
t2_multiple: 2
packer_rules:
  - {id: mean, kind: mean_not_below_nominal, source: "Annex I §1.1", tag: S}
  - {id: t1, kind: t1_fraction_at_most, limit_percent: 2.5, source: "UK guidance", tag: S2}
plan_sets:
  - id: double
    plans:
      - lots: {from: 100, to: 500}
        stages:
          - {size: 30, accept: 1, reject: 3}
          - {size: 30, accept: 4, reject: 5}
        mean_test: {n: 30, published_k: 0.503, source: "Annex II", tag: S}
        source: "Annex II §2.2.1"
        tag: S
)";

std::vector<std::string> Errors(const std::string& text) {
  RuleTable table;
  std::vector<std::string> errors;
  const heft::Status s = heft::LoadRuleTableText(text, "t.yaml", &table, &errors);
  CHECK(s.ok() == errors.empty());
  return errors;
}

std::string Replace(std::string text, const std::string& from, const std::string& to) {
  const auto at = text.find(from);
  REQUIRE(at != std::string::npos);
  return text.replace(at, from.size(), to);
}

bool Has(const std::vector<std::string>& errors, const std::string& needle) {
  for (const auto& e : errors) {
    if (e.find(needle) != std::string::npos) return true;
  }
  return false;
}

}  // namespace

TEST_CASE("the shipped rule tables load", "[comply]") {
  for (const char* name : {"eu-average-quantity.yaml", "us-hb133.yaml"}) {
    RuleTable table;
    std::vector<std::string> errors;
    const heft::Status s = heft::LoadRuleTableFile(
        std::string(HEFT_SOURCE_DIR) + "/config/rules/" + name, &table, &errors);
    INFO(name << ": " << s.message());
    REQUIRE(s.ok());
    CHECK_FALSE(table.bands.empty());
    CHECK_FALSE(table.rules.empty());
  }
  RuleTable eu;
  std::vector<std::string> errors;
  REQUIRE(heft::LoadRuleTableFile(
              std::string(HEFT_SOURCE_DIR) + "/config/rules/eu-average-quantity.yaml", &eu, &errors)
              .ok());
  // Rows above 10 kg carry the [M] tag; rows up to 10 kg do not.
  for (const auto& band : eu.bands) {
    const bool above_10kg = band.from_units >= 10000 * heft::comply::kUnitsPerGram;
    CHECK((band.provenance.tag == heft::comply::SourceTag::kMemory) == above_10kg);
  }
  CHECK(eu.percent_round_up_units == 1000);  // 0.1 g
  const auto* t1 = heft::comply::FindRule(eu, heft::comply::PackerRuleKind::kT1FractionAtMost);
  REQUIRE(t1 != nullptr);
  CHECK(t1->limit_fraction == Approx(0.025));
  CHECK(t1->provenance.tag == heft::comply::SourceTag::kSecondary);  // UK guidance [S2]
}

TEST_CASE("rule table: the minimal table is valid", "[comply]") {
  RuleTable table;
  std::vector<std::string> errors;
  REQUIRE(heft::LoadRuleTableText(kGood, "t.yaml", &table, &errors).ok());
  CHECK(table.bands.size() == 2);
  CHECK(table.bands[0].value == 9000);
  CHECK(table.bands[1].value == 45000);
  CHECK(table.plan_sets[0].plans[0].mean_test->quantile == 0.995);  // default
}

TEST_CASE("rule table errors name file:line:column and the key", "[comply]") {
  // Unknown key (a typo) at its own position: line 6 column 88 is `tga`.
  auto e = Errors(Replace(kGood, "percent: 9, source: \"76/211/EEC Annex I §2.4\", tag: S}",
                          "percent: 9, source: \"76/211/EEC Annex I §2.4\", tag: S, tga: S}"));
  CHECK(Has(e, "tolerance.bands[0].tga: unknown key"));
  CHECK(Has(e, "t.yaml:6:"));

  e = Errors(Replace(kGood, "tag: S2}", "tag: Q}"));
  CHECK(Has(e, "t.yaml:14:"));  // the second rule is on line 14
  CHECK(Has(e, "packer_rules[1].tag: must be one of S, S2, X, M"));

  e = Errors(Replace(kGood, "{from_g: 50, to_g: 100", "{from_g: 60, to_g: 100"));
  CHECK(Has(e, "tolerance.bands[1]: from_g must equal the previous band's to_g"));

  e = Errors(Replace(kGood, "grams: 4.5,", "grams: 4.5, percent: 3,"));
  CHECK(Has(e, "give exactly one of `percent` and `grams`"));

  e = Errors(Replace(kGood, "percent: 9,", "percent: nine,"));
  CHECK(Has(e, "t.yaml:6:"));
  CHECK(Has(e, "tolerance.bands[0].percent: not a finite number"));

  e = Errors(Replace(kGood, "percent: 9,", "percent: 9.0001,"));
  CHECK(Has(e, "more than 3 decimal places"));

  e = Errors(Replace(kGood, ", source: \"UK guidance\", tag: S2}", ", tag: S2}"));
  CHECK(Has(e, "packer_rules[1].source: missing"));

  e = Errors(Replace(kGood, "limit_percent: 2.5, ", ""));
  CHECK(Has(e, "packer_rules[1].limit_percent: missing"));

  e = Errors(Replace(kGood, "kind: mean_not_below_nominal", "kind: mean_above"));
  CHECK(Has(e, "unknown kind 'mean_above'"));

  e = Errors(
      Replace(kGood, "{size: 30, accept: 4, reject: 5}", "{size: 30, accept: 4, reject: 6}"));
  CHECK(Has(e, "t.yaml:21:"));  // the second stage is on line 21
  CHECK(Has(e, "plan_sets[0].plans[0].stages[1]: the last stage must decide"));

  e = Errors(Replace(kGood, "mean_test: {n: 30,", "mean_test: {n: 1,"));
  CHECK(Has(e, "plan_sets[0].plans[0].mean_test.n: must be 0 (whole lot) or between 2"));

  e = Errors(Replace(kGood, "t2_multiple: 2\n", ""));
  CHECK(e.empty());  // no T2 rule in the minimal table, so no T2 multiple is fine
  e = Errors(Replace(Replace(kGood, "t2_multiple: 2\n", ""), "  - {id: mean,",
                     "  - {id: t2, kind: no_pack_below_t2, source: x, tag: S}\n  - {id: mean,"));
  CHECK(Has(e, "a no_pack_below_t2 rule needs `t2_multiple`"));

  // Overlapping plans in one set.
  e = Errors(std::string(kGood) + R"(      - lots: {from: 400}
        stages: [{size: 50, accept: 2, reject: 3}]
        source: x
        tag: S
)");
  CHECK(Has(e, "plan_sets[0].plans[1].lots: lot range overlaps"));

  // Several errors are all reported.
  e = Errors(Replace(Replace(kGood, "tag: S2}", "tag: Q}"), "percent: 9,", "percent: -9,"));
  CHECK(e.size() >= 2);
}

TEST_CASE("rule table: YAML syntax errors, wrong shapes and missing files", "[comply]") {
  auto e = Errors("id: [unclosed\nname: x\n");
  REQUIRE(e.size() == 1);
  CHECK(e[0].rfind("t.yaml:", 0) == 0);
  CHECK(Has(e, "YAML syntax"));
  CHECK(Has(Errors("- just\n- a list\n"), "expected a mapping at the top"));
  CHECK(Has(Errors(""), "expected a mapping at the top"));
  CHECK(Has(Errors("id: x\nname: y\n"), "tolerance: missing"));
  CHECK(Has(Errors(Replace(kGood, "  bands:\n", "  bands: 3\n  old_bands:\n")),
            "expected a non-empty list of bands"));

  RuleTable table;
  std::vector<std::string> errors;
  const heft::Status s = heft::LoadRuleTableFile("/nonexistent/rules.yaml", &table, &errors);
  CHECK_FALSE(s.ok());
  CHECK(s.message() == "/nonexistent/rules.yaml: cannot open the rule table");
}
