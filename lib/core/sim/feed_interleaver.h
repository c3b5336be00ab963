// feed_interleaver.h — several simulated lines merged into one stream in time
// order, as a plant-wide feed would arrive.
//
// Holds one pending pack per line (no buffers); ties in time go to the line
// added first, so the order is deterministic. Used by `heft feed` and tests.
// Pure; not thread-safe.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

#include "core/sim/feed_generator.h"
#include "core/sim/scenario.h"

namespace heft {

struct InterleavedPack {
  std::size_t source = 0;  // which Add() call the pack came from
  GeneratedPack generated;
};

class FeedInterleaver {
 public:
  // Adds a line that will give `packs` packs (spec should pass ValidateScenario).
  void Add(ScenarioSpec spec, std::int64_t packs);

  // The earliest pending pack of all lines; false when every line is finished.
  bool Next(InterleavedPack* out);

  std::size_t size() const { return sources_.size(); }
  const ScenarioSpec& spec(std::size_t source) const { return sources_[source].generator.spec(); }

 private:
  struct Source {
    FeedGenerator generator;
    std::int64_t remaining;
    GeneratedPack pending;
    bool has_pending;
  };
  void Refill(Source* source);

  std::vector<Source> sources_;
};

}  // namespace heft
