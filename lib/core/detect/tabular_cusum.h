// tabular_cusum.h — two-sided tabular CUSUM on standardised values.
//
//   S⁺ᵢ = max(0, S⁺ᵢ₋₁ + zᵢ − k),  S⁻ᵢ = max(0, S⁻ᵢ₋₁ − zᵢ − k); signal when either > h.
// (Montgomery & Runger, Applied Statistics and Probability for Engineers, 3rd ed.,
// §16-10, eqs 16-30/16-31.) Optional fast initial response: both sums start at a
// head start (Lucas & Crosier 1982). Keeps, per side, the number of steps the sum
// has been non-zero and the record index where it last left zero, which give the
// shift size estimate (eq. 16-32) and the onset estimate. Pure; not thread-safe.
#pragma once

#include <cstdint>

namespace heft {

class TabularCusum {
 public:
  TabularCusum(double k, double h) : k_(k), h_(h) {}

  enum class Signal { kNone, kUp, kDown };

  // Standardised value z = (x − μ0)/σ of the record at `index`.
  Signal Update(double z, std::int64_t index);
  // One side only (the other sum is left as it is), for a caller that keeps one CUSUM
  // per side with its own allowance: kUp / kDown when that side is over h.
  Signal UpdateUpper(double z, std::int64_t index);
  Signal UpdateLower(double z, std::int64_t index);
  // Restart both sums at `head_start` (0 for none; commonly h/2).
  void Reset(double head_start = 0.0);

  double upper() const { return upper_; }
  double lower() const { return lower_; }
  int upper_run() const { return upper_run_; }  // n⁺: steps since S⁺ left zero
  int lower_run() const { return lower_run_; }
  std::int64_t upper_onset() const { return upper_onset_; }  // index where S⁺ last left zero
  std::int64_t lower_onset() const { return lower_onset_; }
  // Estimated new mean after a signal, in σ from μ0 (eq. 16-32): k + S⁺/n⁺ or −k − S⁻/n⁻.
  double EstimatedShift(Signal side) const;
  double k() const { return k_; }
  double h() const { return h_; }

  // Restart checkpoint (line_monitor_checkpoint.h): the running statistics as plain values;
  // RestoreState(SaveState()) then the same inputs gives the same outputs.
  struct State {
    double upper = 0.0, lower = 0.0;
    int upper_run = 0, lower_run = 0;
    std::int64_t upper_onset = 0, lower_onset = 0;
  };
  State SaveState() const {
    return {upper_, lower_, upper_run_, lower_run_, upper_onset_, lower_onset_};
  }
  void RestoreState(const State& s) {
    upper_ = s.upper;
    lower_ = s.lower;
    upper_run_ = s.upper_run;
    lower_run_ = s.lower_run;
    upper_onset_ = s.upper_onset;
    lower_onset_ = s.lower_onset;
  }

 private:
  double k_;
  double h_;
  double upper_ = 0.0;
  double lower_ = 0.0;
  int upper_run_ = 0;
  int lower_run_ = 0;
  std::int64_t upper_onset_ = 0;
  std::int64_t lower_onset_ = 0;
};

}  // namespace heft
