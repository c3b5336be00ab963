#include "core/monitor/line_index.h"

#include <cstring>
#include <utility>

namespace heft {

namespace {
// Equal ids, compared a word at a time: ids are short, and a library memcmp call
// cost more than the comparison itself.
bool SameId(std::string_view a, std::string_view b) {
  if (a.size() != b.size()) return false;
  std::size_t i = 0;
  for (; i + 8 <= a.size(); i += 8) {
    std::uint64_t x, y;
    std::memcpy(&x, a.data() + i, 8);
    std::memcpy(&y, b.data() + i, 8);
    if (x != y) return false;
  }
  for (; i < a.size(); ++i) {
    if (a[i] != b[i]) return false;
  }
  return true;
}
}  // namespace

std::uint64_t LineIndex::Hash(std::string_view line) {
  // FNV-1a over 8-byte words then the tail, finished with a multiply-xorshift so the
  // low bits (the bucket) depend on every byte. Ids are short: usually two words.
  std::uint64_t h = 0xcbf29ce484222325ULL ^ line.size();
  std::size_t i = 0;
  for (; i + 8 <= line.size(); i += 8) {
    std::uint64_t w;
    std::memcpy(&w, line.data() + i, 8);
    h = (h ^ w) * 0x100000001b3ULL;
  }
  std::uint64_t tail = 0;
  for (std::size_t shift = 0; i < line.size(); ++i, shift += 8) {  // no memcpy call
    tail |= std::uint64_t{static_cast<unsigned char>(line[i])} << shift;
  }
  h = (h ^ tail) * 0x100000001b3ULL;
  h ^= h >> 32;
  h *= 0x9e3779b97f4a7c15ULL;
  return h ^ (h >> 29);
}

const std::size_t* LineIndex::Find(std::string_view line) const {
  if (buckets_.empty()) return nullptr;
  const std::uint64_t h = Hash(line);
  for (std::size_t at = h & mask_;; at = (at + 1) & mask_) {
    const Bucket& b = buckets_[at];
    if (!b.used) return nullptr;
    if (b.hash == h && SameId(b.key, line)) return &b.slot;
  }
}

void LineIndex::Insert(std::string_view line, std::size_t slot) {
  if (2 * (size_ + 1) > buckets_.size()) Grow();
  const std::uint64_t h = Hash(line);
  std::size_t at = h & mask_;
  while (buckets_[at].used) at = (at + 1) & mask_;
  buckets_[at] = {h, slot, std::string(line), true};
  ++size_;
}

void LineIndex::Grow() {
  std::vector<Bucket> old =
      std::exchange(buckets_, std::vector<Bucket>(buckets_.empty() ? 16 : 2 * buckets_.size()));
  mask_ = buckets_.size() - 1;
  for (Bucket& b : old) {
    if (!b.used) continue;
    std::size_t at = b.hash & mask_;
    while (buckets_[at].used) at = (at + 1) & mask_;
    buckets_[at] = std::move(b);
  }
}

}  // namespace heft
