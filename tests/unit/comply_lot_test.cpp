// Tests of the lot accumulator (hand-worked lot) and of lot boundaries.
#include <catch2/catch.hpp>

#include <cmath>
#include <string>
#include <vector>

#include "core/comply/lot_accumulator.h"
#include "core/comply/lot_clock.h"
#include "core/comply/net_content_limits.h"
#include "io/rule_table_loader.h"

namespace {

using namespace heft::comply;

const RuleTable& EuTable() {
  static const RuleTable table = [] {
    RuleTable t;
    std::vector<std::string> errors;
    REQUIRE(
        heft::LoadRuleTableFile(
            std::string(HEFT_SOURCE_DIR) + "/config/rules/eu-average-quantity.yaml", &t, &errors)
            .ok());
    return t;
  }();
  return table;
}

NetContentLimits Limits(double nominal) {
  NetContentLimits l;
  REQUIRE(ComputeLimits(EuTable(), nominal, false, &l).ok());
  return l;
}

const RuleVerdict& Verdict(const std::vector<RuleVerdict>& v, const std::string& id) {
  for (const auto& x : v) {
    if (x.rule_id == id) return x;
  }
  FAIL("no verdict " << id);
  throw 0;
}

constexpr std::int64_t kHour = 3'600'000;

}  // namespace

TEST_CASE("hand-worked lot: Millbrook oats-1, 500 g bags", "[comply]") {
  // Invented lot, worked by hand and checked with numpy (/usr/bin/python3):
  // in-lot packs 502 498 505 484 501 499 503 496 500 469 (g); Qn 500, TNE 15,
  // T1 485, T2 470. Σ = 4957 → mean 495.7, giveaway −43 g; s = 11.015645
  // (numpy.std(ddof=1)); moving ranges 4 7 21 17 2 4 7 4 31 = 97 → MR̄ 10.7778,
  // σ_st = 10.7778/1.128 = 9.554768; below nominal: 498 484 499 496 469 = 5
  // (500.0 is not below); T1: 484 469 = 2; T2: 469 = 1.
  LotSettings settings;
  settings.cost_per_kg = 2.40;
  LotAccumulator lot(Limits(500.0), settings);
  const std::vector<double> in_lot = {502, 498, 505, 484, 501, 499, 503, 496, 500, 469};
  std::int64_t index = 100;
  std::int64_t t = 1'700'000'000'000;
  for (double x : in_lot) lot.Add(x, PackRole::kInLot, t += 500, index++);
  lot.Add(480.0, PackRole::kRejected, t += 500, index++);  // pushed off: T1 caught
  lot.Add(12.0, PackRole::kGross, t += 500, index++);      // empty bag
  lot.Add(0.0, PackRole::kError, t += 500, index++);
  lot.Add(std::nan(""), PackRole::kInLot, t += 500, index++);  // refused, counted

  const LotFigures f = lot.Figures();
  CHECK(f.count == 10);
  CHECK(f.seen == 14);
  CHECK(f.rejected == 1);
  CHECK(f.rejected_below_t1 == 1);
  CHECK(f.gross == 1);
  CHECK(f.errors == 1);
  CHECK(f.invalid == 1);
  CHECK(f.mean_g == Approx(495.7).epsilon(1e-12));
  CHECK(f.s_g == Approx(11.015645439303338).epsilon(1e-9));
  CHECK(f.short_term_sigma_g == Approx(9.554767533490939).epsilon(1e-9));
  CHECK(f.min_g == 469.0);
  CHECK(f.max_g == 505.0);
  CHECK(f.below_nominal == 5);
  CHECK(f.t1_count == 2);
  CHECK(f.t1_fraction == Approx(0.2));
  CHECK(f.t2_count == 1);
  CHECK(f.giveaway_g == Approx(-43.0).epsilon(1e-9));
  CHECK(f.giveaway_per_pack_g == Approx(-4.3).epsilon(1e-9));
  CHECK(f.giveaway_money == Approx(-0.1032).epsilon(1e-9));  // −43 g × 2.40 / kg
  CHECK(f.first_index == 100);
  CHECK(f.last_index == 113);

  const auto v = lot.Verdicts(EuTable(), false);
  REQUIRE(v.size() == 3);
  CHECK(Verdict(v, "mean").state == VerdictState::kFail);
  CHECK(Verdict(v, "mean").margin == Approx(-4.3).epsilon(1e-9));
  CHECK(Verdict(v, "t1_share").state == VerdictState::kFail);
  CHECK(Verdict(v, "t1_share").margin == -2.0);  // floor(0.025 × 10) = 0 allowed
  CHECK(Verdict(v, "t1_share").margin_unit == "packs");
  CHECK(Verdict(v, "no_t2").state == VerdictState::kFail);
  CHECK(Verdict(v, "no_t2").margin == Approx(-1.0));  // lightest 469 − T2 470

  // Rejects returned into the lot: 11 packs, 480 is a third T1.
  settings.rejects_in_lot = true;
  LotAccumulator with_rejects(Limits(500.0), settings);
  for (double x : in_lot) with_rejects.Add(x, PackRole::kInLot, 0, 0);
  with_rejects.Add(480.0, PackRole::kRejected, 0, 0);
  CHECK(with_rejects.Figures().count == 11);
  CHECK(with_rejects.Figures().t1_count == 3);
}

TEST_CASE("lot verdicts pass with margins on a good lot", "[comply]") {
  // 200 packs at 503 ± 2 g (alternating), T1 = 485: mean margin 3 g, no T1, lightest
  // 501 g → T2 margin 501 − 470 = 31 g; T1 allowance floor(0.025 × 200) = 5 packs.
  LotAccumulator lot(Limits(500.0), {});
  for (int i = 0; i < 200; ++i) lot.Add(i % 2 ? 505.0 : 501.0, PackRole::kInLot, i, i);
  const auto v = lot.Verdicts(EuTable(), false);
  CHECK(Verdict(v, "mean").state == VerdictState::kPass);
  CHECK(Verdict(v, "mean").margin == Approx(3.0));
  CHECK(Verdict(v, "t1_share").margin == 5.0);
  CHECK(Verdict(v, "no_t2").margin == Approx(31.0));
  // Short-term sigma of an alternating series: MR = 4 each → 4/1.128 (check-values §2).
  CHECK(lot.Figures().short_term_sigma_g == Approx(4.0 / 1.128));
  lot.Reset();
  CHECK(lot.Figures().count == 0);
  CHECK(lot.Verdicts(EuTable(), false)[0].state == VerdictState::kNotEvaluated);
}

TEST_CASE("lot figures keep precision at large weights", "[comply]") {
  // 20 kg sacks (the [M] band, TNE 200 g) with 0.01 g noise: mean and s exact to 1e-9.
  LotAccumulator lot(Limits(20000.0), {});
  for (int i = 0; i < 10000; ++i) lot.Add(20100.0 + (i % 2 ? 0.01 : -0.01), PackRole::kInLot, 0, i);
  const LotFigures f = lot.Figures();
  CHECK(f.mean_g == Approx(20100.0).epsilon(1e-13));
  CHECK(f.s_g == Approx(0.01 * std::sqrt(10000.0 / 9999.0)).epsilon(1e-6));
  CHECK(f.giveaway_g == Approx(100.0 * 10000).epsilon(1e-12));
}

TEST_CASE("lot clock: by count", "[comply]") {
  LotPolicy policy;
  policy.boundary = LotBoundary::kCount;
  policy.packs_per_lot = 3;
  REQUIRE(ValidateLotPolicy(policy).ok());
  LotClock clock(policy);
  CHECK(clock.StartsNewLot(0, 0));  // first pack opens a lot
  CHECK_FALSE(clock.StartsNewLot(1, 1));
  CHECK_FALSE(clock.StartsNewLot(2, 2));
  CHECK(clock.StartsNewLot(3, 3));  // lot full
  policy.packs_per_lot = 0;
  CHECK_FALSE(ValidateLotPolicy(policy).ok());
}

TEST_CASE("lot clock: by local hour", "[comply]") {
  LotPolicy policy;
  policy.boundary = LotBoundary::kHour;
  policy.utc_offset_minutes = 330;  // UTC+05:30: local hours start at hh:30 UTC
  LotClock clock(policy);
  const std::int64_t day = 19'700 * 24 * kHour;  // a UTC midnight
  CHECK(clock.PeriodStartMs(day + 10 * 60'000) == day - 30 * 60'000);
  CHECK(clock.PeriodStartMs(day + 35 * 60'000) == day + 30 * 60'000);
  CHECK(clock.StartsNewLot(day + 10 * 60'000, 0));
  CHECK_FALSE(clock.StartsNewLot(day + 29 * 60'000, 100));
  CHECK(clock.StartsNewLot(day + 30 * 60'000, 200));  // 06:00 local
  CHECK_FALSE(clock.StartsNewLot(day + 89 * 60'000, 1));
  CHECK(clock.StartsNewLot(day + 20 * 60'000, 2));  // device time stepped back: new lot
  // Before 1970 (negative times) still floors correctly.
  LotClock plain({LotBoundary::kHour, 0, {}, 0});
  CHECK(plain.PeriodStartMs(-1) == -kHour);
}

TEST_CASE("lot clock: by shift schedule", "[comply]") {
  // Shifts at 06:00, 14:00, 22:00 local, local = UTC+1.
  LotPolicy policy;
  policy.boundary = LotBoundary::kShifts;
  policy.shift_start_minutes = {360, 840, 1320};
  policy.utc_offset_minutes = 60;
  REQUIRE(ValidateLotPolicy(policy).ok());
  LotClock clock(policy);
  const std::int64_t day = 19'700 * 24 * kHour;  // UTC midnight = 01:00 local
  // 04:30 UTC = 05:30 local → the previous day's 22:00 shift = 21:00 UTC the day before.
  CHECK(clock.PeriodStartMs(day + 4 * kHour + 30 * 60'000) == day - 3 * kHour);
  // 05:00 UTC = 06:00 local → morning shift starts exactly then.
  CHECK(clock.PeriodStartMs(day + 5 * kHour) == day + 5 * kHour);
  // 20:59 UTC = 21:59 local → afternoon shift (14:00 local = 13:00 UTC).
  CHECK(clock.PeriodStartMs(day + 20 * kHour + 59 * 60'000) == day + 13 * kHour);
  CHECK(clock.StartsNewLot(day + 4 * kHour, 0));
  CHECK_FALSE(clock.StartsNewLot(day + 4 * kHour + 59 * 60'000, 10));
  CHECK(clock.StartsNewLot(day + 5 * kHour, 20));

  policy.shift_start_minutes = {840, 360};
  CHECK_FALSE(ValidateLotPolicy(policy).ok());
  policy.shift_start_minutes = {1440};
  CHECK_FALSE(ValidateLotPolicy(policy).ok());
  policy.shift_start_minutes = {};
  CHECK_FALSE(ValidateLotPolicy(policy).ok());
}

TEST_CASE("lot clock: manual lots", "[comply]") {
  LotClock manual({LotBoundary::kManual, 0, {}, 0});
  CHECK(manual.StartsNewLot(0, 0));  // the first pack is never outside a lot
  CHECK_FALSE(manual.StartsNewLot(10 * kHour, 5000));

  // An operator opens a lot by hand in an hour-lot line: later packs of that hour stay.
  LotClock hourly({LotBoundary::kHour, 0, {}, 0});
  CHECK(hourly.StartsNewLot(0, 0));
  hourly.NoteManualOpen(kHour / 2);
  CHECK_FALSE(hourly.StartsNewLot(kHour / 2 + 1, 0));
  CHECK(hourly.StartsNewLot(kHour, 10));
}
