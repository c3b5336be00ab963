#include "io/checkpoint_codec.h"

#include <array>
#include <cstring>
#include <limits>
#include <optional>
#include <type_traits>
#include <vector>

namespace heft {
namespace {

constexpr char kMagic[4] = {'h', 'L', 'C', 'P'};
constexpr std::uint32_t kMaxCount = 1u << 24;  // far above any real window or table

std::uint64_t Fnv1a(std::string_view bytes) {
  std::uint64_t h = 14695981039346656037ull;
  for (unsigned char c : bytes) {
    h ^= c;
    h *= 1099511628211ull;
  }
  return h;
}

// ---- The field lists: one per struct, shared by the writer and the reader. ----
// `io(x)` writes or reads x; the order here is the format.

template <class IO>
void Fields(IO& io, TabularCusum::State& s) {
  io(s.upper), io(s.lower), io(s.upper_run), io(s.lower_run), io(s.upper_onset), io(s.lower_onset);
}
template <class IO>
void Fields(IO& io, EwmaChart::State& s) {
  io(s.value), io(s.steps);
}
template <class IO>
void Fields(IO& io, HeadCusums::Sums& s) {
  io(s.up), io(s.down), io(s.up_run), io(s.down_run), io(s.up_onset), io(s.down_onset);
}
template <class IO>
void Fields(IO& io, RunRules::State& s) {
  io(s.far_up), io(s.far_down), io(s.out_up), io(s.out_down), io(s.seen), io(s.side_run),
      io(s.trend_run), io(s.saw_run), io(s.last_move), io(s.hug_run), io(s.avoid_run),
      io(s.avoid_up), io(s.avoid_down), io(s.last);
}
template <class IO>
void Fields(IO& io, LogVarianceCusum::State& s) {
  io(s.mean), io(s.sd), io(s.sum), io(s.count), io(s.s1), io(s.s2), io(s.last_ratio),
      io(s.smoothed_log);
}
template <class IO>
void Fields(IO& io, StuckReading::State& s) {
  io(s.min_run), io(s.run), io(s.stuck), io(s.last), io(s.has_last), io(s.pairs), io(s.repeats);
}
template <class IO>
void Fields(IO& io, RobustBaseline::Sums& s) {
  io(s.n), io(s.s), io(s.ss);
}
template <class IO>
void Fields(IO& io, RobustBaseline::State& s) {
  io(s.ready), io(s.n_heads), io(s.ref), io(s.level), io(s.sigma), io(s.phi), io(s.offsets),
      io(s.total), io(s.heads), io(s.lag_xy), io(s.lag_xx), io(s.pending_total),
      io(s.pending_heads), io(s.pending_xy), io(s.pending_xx), io(s.last_residual), io(s.has_last),
      io(s.excluded);
}
template <class IO>
void Fields(IO& io, ShiftedSums::State& s) {
  io(s.has_reference), io(s.reference), io(s.s1), io(s.s2), io(s.s3), io(s.s4);
}
template <class IO>
void Fields(IO& io, RollingMoments::State& s) {
  io(s.buffer), io(s.head), io(s.count), io(s.total_added), io(s.removals_since_recompute),
      io(s.sums), io(s.sum_mr);
}
template <class IO>
void Fields(IO& io, LineMonitorCheckpoint::MeanRaise& s) {
  io(s.pack), io(s.side), io(s.index), io(s.level);
}
template <class IO>
void Fields(IO& io, LineMonitorCheckpoint::Entry& s) {
  io(s.z), io(s.white), io(s.index), io(s.time_ms), io(s.head);
}
template <class IO>
void Fields(IO& io, LineMonitorCheckpoint& c) {
  io(c.settings_fingerprint), io(c.running), io(c.packs), io(c.error_packs), io(c.gross_packs),
      io(c.last_index), io(c.last_time_ms), io(c.open), io(c.raised_at), io(c.raised_at_pack);
  io(c.learn_values), io(c.learn_heads), io(c.learn_indexes), io(c.learn_target), io(c.start_index),
      io(c.settling_alarmed), io(c.heads);
  io(c.baseline), io(c.inflation), io(c.block_count), io(c.block_clean);
  io(c.cusum_up), io(c.cusum_down), io(c.ewma), io(c.mean_clear_ewma), io(c.mean_open_size),
      io(c.mean_raises), io(c.mean_open_side), io(c.mean_open_onset), io(c.mean_open_refit_done);
  io(c.head_cusums), io(c.off_head), io(c.off_head_shift), io(c.spread_scale), io(c.subgroup_count),
      io(c.subgroup_sum), io(c.rules), io(c.spread), io(c.since_cycle_test), io(c.stuck),
      io(c.stuck_start_index);
  io(c.ring), io(c.last_z);
  io(c.outlier_last_index), io(c.outlier_last_pack), io(c.outlier_count), io(c.outlier_side_run);
  io(c.recent);
}
template <class IO>
void Fields(IO& io, comply::LotClock::State& s) {
  io(s.started), io(s.current_period);
}
template <class IO>
void Fields(IO& io, comply::LotAccumulator::Checkpoint& s) {
  io(s.count), io(s.rejected), io(s.gross), io(s.errors), io(s.invalid), io(s.seen),
      io(s.reference), io(s.mean_dev), io(s.m2), io(s.sum_mr), io(s.last), io(s.min), io(s.max),
      io(s.t1), io(s.t2), io(s.below_nominal), io(s.rejected_below_t1), io(s.first_time_ms),
      io(s.last_time_ms), io(s.first_index), io(s.last_index), io(s.any);
}
template <class IO>
void Fields(IO& io, comply::LotFigures& f) {
  io(f.count), io(f.rejected), io(f.gross), io(f.errors), io(f.invalid), io(f.seen), io(f.mean_g),
      io(f.s_g), io(f.short_term_sigma_g), io(f.min_g), io(f.max_g), io(f.t1_count),
      io(f.t1_fraction), io(f.t2_count), io(f.below_nominal), io(f.rejected_below_t1),
      io(f.giveaway_g), io(f.giveaway_per_pack_g), io(f.giveaway_money), io(f.first_time_ms),
      io(f.last_time_ms), io(f.first_index), io(f.last_index);
}
template <class IO>
void Fields(IO& io, LotVerdict& v) {
  io(v.rule_id), io(v.state), io(v.margin), io(v.unit), io(v.note);
}
template <class IO>
void Fields(IO& io, SafeTargetAdvice& a) {
  io(a.target_g), io(a.binding_rule), io(a.sigma_g), io(a.packs_per_hour), io(a.saving_per_pack_g),
      io(a.saving_per_hour_g), io(a.saving_per_year_kg), io(a.saving_per_year_money),
      io(a.raise_needed), io(a.text);
}
template <class IO>
void Fields(IO& io, LotReport& r) {
  io(r.line), io(r.seq), io(r.lot_id), io(r.boundary), io(r.partial), io(r.opened_ms),
      io(r.rules_id), io(r.nominal_g), io(r.tne_g), io(r.t1_g), io(r.t2_g), io(r.cost_per_kg),
      io(r.figures), io(r.verdicts), io(r.advice);
}
template <class IO>
void Fields(IO& io, LineComplianceCheckpoint& c) {
  io(c.settings_fingerprint), io(c.clock), io(c.lot), io(c.seq), io(c.lot_opened_ms),
      io(c.lot_open), io(c.lot_seen), io(c.level_ring), io(c.level_next), io(c.level_count),
      io(c.level_sum);
  std::optional<int> raised;
  if (c.raised) raised = static_cast<int>(*c.raised);
  io(raised);
  if constexpr (IO::kReading) {
    c.raised.reset();
    if (raised) {
      if (*raised < 0 || *raised > static_cast<int>(Severity::kAlarm)) {
        io.Fail("compliance severity out of range");
      } else {
        c.raised = static_cast<Severity>(*raised);
      }
    }
  }
  io(c.announced), io(c.low_since), io(c.since_assess), io(c.open_lot);
}
template <class IO>
void Fields(IO& io, LineCheckpoint& c) {
  io(c.line), io(c.position), io(c.last_arrival_ms), io(c.record_clock_ms), io(c.monitor),
      io(c.compliance);
}

template <class T>
struct IsVector : std::false_type {};
template <class T>
struct IsVector<std::vector<T>> : std::true_type {};
template <class T>
struct IsOptional : std::false_type {};
template <class T>
struct IsOptional<std::optional<T>> : std::true_type {};
template <class T>
struct IsArray : std::false_type {};
template <class T, std::size_t N>
struct IsArray<std::array<T, N>> : std::true_type {};

class Writer {
 public:
  static constexpr bool kReading = false;
  std::string out;

  template <class T>
  void operator()(T& v) {
    if constexpr (std::is_same_v<T, bool>) {
      out.push_back(v ? 1 : 0);
    } else if constexpr (std::is_integral_v<T>) {
      Raw(static_cast<std::uint64_t>(v));  // two's complement for signed values
    } else if constexpr (std::is_same_v<T, double>) {
      std::uint64_t bits = 0;
      std::memcpy(&bits, &v, sizeof bits);
      Raw(bits);
    } else if constexpr (std::is_same_v<T, std::string>) {
      Count(v.size());
      out.append(v);
    } else if constexpr (IsVector<T>::value) {
      Count(v.size());
      for (auto& item : v) Item(item);
    } else if constexpr (IsArray<T>::value) {
      for (auto& item : v) Item(item);
    } else if constexpr (IsOptional<T>::value) {
      bool has = v.has_value();
      (*this)(has);
      if (v) (*this)(*v);
    } else {
      Fields(*this, v);
    }
  }

 private:
  // vector<bool> hands out proxies: copy them.
  template <class R>
  void Item(R&& item) {
    if constexpr (std::is_same_v<std::decay_t<R>, bool>) {
      bool b = item;
      (*this)(b);
    } else {
      (*this)(item);
    }
  }

 public:
  void Raw32(std::uint32_t v) {
    for (int i = 0; i < 4; ++i) out.push_back(static_cast<char>((v >> (8 * i)) & 0xff));
  }
  void Raw(std::uint64_t v) {
    for (int i = 0; i < 8; ++i) out.push_back(static_cast<char>((v >> (8 * i)) & 0xff));
  }

 private:
  void Count(std::size_t n) { Raw32(static_cast<std::uint32_t>(n)); }
};

class Reader {
 public:
  static constexpr bool kReading = true;
  explicit Reader(std::string_view in) : in_(in) {}

  bool ok() const { return error_.empty(); }
  const std::string& error() const { return error_; }
  std::size_t left() const { return in_.size() - at_; }
  void Fail(const std::string& why) {
    if (error_.empty()) error_ = why + " at byte " + std::to_string(at_);
  }

  template <class T>
  void operator()(T& v) {
    if (!ok()) return;
    if constexpr (std::is_same_v<T, bool>) {
      const std::uint8_t b = Byte();
      if (b > 1) Fail("a flag is neither 0 nor 1");
      v = b == 1;
    } else if constexpr (std::is_integral_v<T>) {
      const std::uint64_t raw = Raw();
      if constexpr (std::is_signed_v<T>) {
        const auto wide = static_cast<std::int64_t>(raw);
        if (wide < std::numeric_limits<T>::min() || wide > std::numeric_limits<T>::max()) {
          Fail("an integer is out of range");
        }
        v = static_cast<T>(wide);
      } else {
        if (raw > std::numeric_limits<T>::max()) Fail("an integer is out of range");
        v = static_cast<T>(raw);
      }
    } else if constexpr (std::is_same_v<T, double>) {
      const std::uint64_t bits = Raw();
      std::memcpy(&v, &bits, sizeof v);
    } else if constexpr (std::is_same_v<T, std::string>) {
      const std::size_t n = Count(1);
      v.assign(in_.substr(at_, n));
      at_ += n;
    } else if constexpr (IsVector<T>::value) {
      const std::size_t n = Count(1);
      v.clear();
      v.reserve(n);
      for (std::size_t i = 0; i < n && ok(); ++i) {
        typename T::value_type item{};
        (*this)(item);
        v.push_back(item);
      }
    } else if constexpr (IsArray<T>::value) {
      for (auto& item : v) (*this)(item);
    } else if constexpr (IsOptional<T>::value) {
      bool has = false;
      (*this)(has);
      v.reset();
      if (has && ok()) {
        typename T::value_type value{};
        (*this)(value);
        v = std::move(value);
      }
    } else {
      Fields(*this, v);
    }
  }

 private:
  // A count of items each at least `min_bytes` long: no more than what is left.
  std::size_t Count(std::size_t min_bytes) {
    if (left() < 4) {
      Fail("the blob ends early");
      return 0;
    }
    std::uint32_t n = 0;
    for (int i = 0; i < 4; ++i) n |= static_cast<std::uint32_t>(Byte()) << (8 * i);
    if (n > kMaxCount || n * min_bytes > left()) {
      Fail("a count (" + std::to_string(n) + ") is larger than the blob");
      return 0;
    }
    return n;
  }
  std::uint8_t Byte() {
    if (at_ >= in_.size()) {
      Fail("the blob ends early");
      return 0;
    }
    return static_cast<std::uint8_t>(in_[at_++]);
  }
  std::uint64_t Raw() {
    if (left() < 8) {
      Fail("the blob ends early");
      at_ = in_.size();
      return 0;
    }
    std::uint64_t v = 0;
    for (int i = 0; i < 8; ++i) v |= static_cast<std::uint64_t>(Byte()) << (8 * i);
    return v;
  }

  std::string_view in_;
  std::size_t at_ = 0;
  std::string error_;
};

}  // namespace

std::string EncodeLineCheckpoint(const LineCheckpoint& checkpoint) {
  Writer w;
  w.out.append(kMagic, sizeof kMagic);
  w.Raw32(kLineCheckpointFormat);
  // The writer only reads; the field lists take non-const references to serve both ways.
  w(const_cast<LineCheckpoint&>(checkpoint));
  const std::uint64_t sum = Fnv1a(w.out);
  w.Raw(sum);
  return std::move(w.out);
}

Status DecodeLineCheckpoint(std::string_view blob, LineCheckpoint* out) {
  constexpr std::size_t kHeader = sizeof kMagic + 4;
  if (blob.size() < kHeader + 8 || std::memcmp(blob.data(), kMagic, sizeof kMagic) != 0) {
    return Status::Error("not a heft line checkpoint");
  }
  std::uint32_t format = 0;
  for (int i = 0; i < 4; ++i) {
    format |= static_cast<std::uint32_t>(static_cast<unsigned char>(blob[4 + i])) << (8 * i);
  }
  if (format != kLineCheckpointFormat) {
    return Status::Error("checkpoint format " + std::to_string(format) + ", this heft reads " +
                         std::to_string(kLineCheckpointFormat));
  }
  const std::string_view body = blob.substr(0, blob.size() - 8);
  std::uint64_t sum = 0;
  for (int i = 0; i < 8; ++i) {
    sum |= static_cast<std::uint64_t>(static_cast<unsigned char>(blob[body.size() + i])) << (8 * i);
  }
  if (sum != Fnv1a(body)) return Status::Error("checkpoint checksum mismatch (damaged)");
  Reader r(body.substr(kHeader));
  LineCheckpoint c;
  r(c);
  if (r.ok() && r.left() != 0) r.Fail("trailing bytes");
  if (!r.ok()) return Status::Error("damaged checkpoint: " + r.error());
  *out = std::move(c);
  return Status::Ok();
}

}  // namespace heft
