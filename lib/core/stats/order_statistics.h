// order_statistics.h — exact order statistics of a changing multiset (a sliding window):
// insert, erase, k-th smallest and quantiles.
//
// Structure: the values in ascending order, cut into blocks of 16..127 values (target 64),
// each a sorted vector; an array of block maxima to find a value's block by binary search,
// and a Fenwick tree over block sizes to find the block holding rank k.
//   insert / erase: O(log(N/B)) search + O(B) contiguous move inside one block + O(log(N/B))
//                   Fenwick update; a block split or merge (O(N/B)) happens at most once
//                   per ~B/2 updates of that block, i.e. amortised O(N/B²): < 2 moves at
//                   N = 5,000.
//   k-th smallest:  O(log(N/B)).
// Why this and not a balanced tree: a treap with subtree sizes (O(log N), tried first)
// measured ~190 ns of order-statistics work per window update at N = 500 on this machine
// class, nearly all of it branch mispredictions on the ~40 random-key comparisons of its
// walks. Blocks keep the searches short and branch-free and the moves contiguous (~32
// doubles): ~110 ns per update at N = 500 (tools/microbench/stats_bench.cpp, Release, shared
// 2-core VM). Two heaps with a moving split give one fixed quantile only; a Fenwick tree
// indexed by value needs the value universe in advance, which a stream of doubles lacks.
// Equal values are interchangeable for order statistics, so Erase removes any one copy.
// Values must not be NaN (the windows filter non-finite values). Not thread-safe.
#pragma once

#include <cstddef>
#include <vector>

#include "core/stats/stats_types.h"

namespace heft {

class OrderStatistics {
 public:
  static constexpr std::size_t kBlockTarget = 64;

  OrderStatistics() = default;

  void Insert(double value);
  // Removes one copy of `value`; false if it is not present.
  bool Erase(double value);
  void Clear();

  std::size_t size() const { return size_; }
  bool empty() const { return size_ == 0; }

  // k-th smallest value, 0-based; k < size().
  double Select(std::size_t k) const;
  double Min() const { return blocks_.front().front(); }
  double Max() const { return block_max_.back(); }
  // Quantile p in [0, 1] (quantile.h definitions); size() must be >= 1.
  double Quantile(double p, QuantileType type) const;
  // All values ascending (replaces *out).
  void SortedValues(std::vector<double>* out) const;

 private:
  std::size_t BlockFor(double value) const;  // first block whose max >= value, else last
  void FenwickAdd(std::size_t block, long delta);
  void RebuildIndex();  // block maxima and Fenwick tree from the blocks
  void SplitBlock(std::size_t b);
  void MergeSmallBlock(std::size_t b);

  std::vector<std::vector<double>> blocks_;
  std::vector<double> block_max_;
  std::vector<std::size_t> fenwick_;  // 1-based over block sizes
  std::size_t fenwick_top_ = 0;       // largest power of two <= blocks_.size()
  std::size_t size_ = 0;
};

}  // namespace heft
