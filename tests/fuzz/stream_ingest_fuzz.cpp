// stream_ingest_fuzz.cpp — fuzz target for the framer and StreamIngest
// (core/record/line_framer.h, core/monitor/stream_ingest.h) with a real Plant behind.
//
// The first byte picks a chunk size; the rest is the stream. Properties: every data
// record is accounted for (records = accepted + malformed + refused), the listener hears
// of every pack and problem, and feeding the same bytes whole or in chunks gives the same
// counters and the same findings (framing must not depend on how TCP splits the bytes).
// Records without a time take the arrival time, the same in both runs.
#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <string_view>
#include <vector>

#include "core/model/finding.h"
#include "core/monitor/plant.h"
#include "core/monitor/stream_ingest.h"
#include "fuzz_check.h"

namespace {

class CountingListener final : public heft::IngestListener {
 public:
  void OnPack(std::string_view, const heft::Pack&) override { ++packs; }
  void OnProblem(const heft::RecordProblem& problem) override {
    ++problems;
    FUZZ_CHECK(problem.excerpt.size() <= 4 * 200);  // an excerpt, not the record
  }
  std::int64_t packs = 0;
  std::int64_t problems = 0;
};

struct Outcome {
  heft::IngestCounters counters;
  std::int64_t packs = 0;
  std::int64_t problems = 0;
  std::vector<heft::Finding> findings;
};

// Two plants that live for the whole fuzzing process and see the same inputs in the same
// order, so they stay in lockstep: one is fed in chunks, the other whole. A new line costs
// its detector design (milliseconds, far more under ASan), so fresh plants per input would
// leave the fuzzer at a few inputs per second; at most 8 lines are kept (refusals beyond),
// and their baselines fill up across inputs so detection is reached too. The price: a
// crash may depend on earlier inputs, while libFuzzer saves only the last one (replay the
// corpus with it to reproduce).
heft::PlantSettings FuzzPlantSettings() {
  heft::PlantSettings settings;
  settings.defaults.nominal_g = 500.0;
  settings.defaults.baseline_packs = 100;
  settings.max_lines = 8;
  return settings;
}

Outcome Run(heft::Plant& plant, std::string_view bytes, std::size_t chunk) {
  CountingListener listener;
  // A short maximum so over-long records are reached by short inputs.
  heft::StreamIngest ingest(plant, listener, 64);
  Outcome o;
  for (std::size_t at = 0; at < bytes.size(); at += chunk) {
    ingest.Feed(bytes.substr(at, chunk), 1772431200000, &o.findings);
  }
  ingest.Finish(1772431200000, &o.findings);
  o.counters = ingest.counters();
  o.packs = listener.packs;
  o.problems = listener.problems;
  return o;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size == 0) return 0;
  const std::size_t chunk = 1 + data[0] % 17;
  const std::string_view bytes(reinterpret_cast<const char*>(data) + 1, size - 1);
  static heft::Plant chunked_plant(FuzzPlantSettings());
  static heft::Plant whole_plant(FuzzPlantSettings());
  const Outcome split = Run(chunked_plant, bytes, chunk);
  const heft::IngestCounters& c = split.counters;
  FUZZ_CHECK(c.records == c.accepted + c.malformed + c.refused);
  FUZZ_CHECK(split.packs == c.accepted);
  FUZZ_CHECK(split.problems == c.malformed);
  const Outcome whole = Run(whole_plant, bytes, std::max<std::size_t>(1, bytes.size()));
  FUZZ_CHECK(whole.counters.records == c.records);
  FUZZ_CHECK(whole.counters.accepted == c.accepted);
  FUZZ_CHECK(whole.counters.malformed == c.malformed);
  FUZZ_CHECK(whole.counters.refused == c.refused);
  // Same bytes, same arrival time, plants in the same state: the same findings.
  FUZZ_CHECK(whole.findings.size() == split.findings.size());
  for (std::size_t i = 0; i < split.findings.size(); ++i) {
    FUZZ_CHECK(whole.findings[i].kind == split.findings[i].kind);
    FUZZ_CHECK(whole.findings[i].at == split.findings[i].at);
    FUZZ_CHECK(whole.findings[i].line == split.findings[i].line);
  }
  for (const heft::Finding& f : split.findings) {
    FUZZ_CHECK(f.at >= 0 && f.at <= c.records);
  }
  return 0;
}
