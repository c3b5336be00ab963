// feed_interleaver.cpp — time-ordered merge of simulated lines.
#include "core/sim/feed_interleaver.h"

#include <utility>

namespace heft {

void FeedInterleaver::Add(ScenarioSpec spec, std::int64_t packs) {
  sources_.push_back(Source{FeedGenerator(std::move(spec)), packs, GeneratedPack{}, false});
  Refill(&sources_.back());
}

void FeedInterleaver::Refill(Source* source) {
  source->has_pending = source->remaining > 0;
  if (source->has_pending) {
    source->pending = source->generator.Next();
    --source->remaining;
  }
}

bool FeedInterleaver::Next(InterleavedPack* out) {
  Source* best = nullptr;
  std::size_t best_index = 0;
  for (std::size_t i = 0; i < sources_.size(); ++i) {
    Source& s = sources_[i];
    if (!s.has_pending) continue;
    if (best == nullptr || s.pending.pack.time_ms < best->pending.pack.time_ms) {
      best = &s;
      best_index = i;
    }
  }
  if (best == nullptr) return false;
  out->source = best_index;
  out->generated = best->pending;
  Refill(best);
  return true;
}

}  // namespace heft
