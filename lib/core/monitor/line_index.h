// line_index.h — line id → slot, looked up by string_view without building a string.
//
// Every record names its line, so this lookup runs once per pack: an open-addressing
// table with a cheap hash of the id's bytes, probed linearly, and one comparison on
// a hash match (std::unordered_map's prime-modulo buckets cost several times more).
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace heft {

class LineIndex {
 public:
  // The slot of `line`, or nullptr when it has none.
  const std::size_t* Find(std::string_view line) const;
  // REQUIRES: `line` is not in the index yet.
  void Insert(std::string_view line, std::size_t slot);
  std::size_t size() const { return size_; }

 private:
  struct Bucket {
    std::uint64_t hash = 0;
    std::size_t slot = 0;
    std::string key;
    bool used = false;
  };
  static std::uint64_t Hash(std::string_view line);
  void Grow();

  std::vector<Bucket> buckets_;  // size a power of two, at most half full
  std::size_t mask_ = 0;         // buckets_.size() − 1
  std::size_t size_ = 0;
};

}  // namespace heft
