#include "core/stats/order_statistics.h"

#include <algorithm>

#include "core/stats/quantile.h"

namespace heft {
namespace {
constexpr std::size_t kSplitAt = 2 * OrderStatistics::kBlockTarget;     // sizes stay < 128
constexpr std::size_t kMergeBelow = OrderStatistics::kBlockTarget / 4;  // and >= 16

// First index i in ascending a[0..n) with a[i] >= x (kUpper: a[i] > x), n if none.
// Branch-free halving (the comparison becomes a conditional move): random weights make
// the branches of std::lower_bound mispredict half the time, which dominated the cost.
template <bool kUpper>
std::size_t Bound(const double* a, std::size_t n, double x) {
  if (n == 0) return 0;
  const double* base = a;
  while (n > 1) {
    const std::size_t half = n / 2;
    const bool right = kUpper ? base[half - 1] <= x : base[half - 1] < x;
    // A mask, not `right ? half : 0`: GCC turns the ternary back into a branch.
    base += half & (std::size_t{0} - static_cast<std::size_t>(right));
    n -= half;
  }
  const bool after = kUpper ? *base <= x : *base < x;
  return static_cast<std::size_t>(base - a) + (after ? 1 : 0);
}
}  // namespace

void OrderStatistics::Clear() {
  blocks_.clear();
  block_max_.clear();
  fenwick_.clear();
  fenwick_top_ = 0;
  size_ = 0;
}

std::size_t OrderStatistics::BlockFor(double value) const {
  const std::size_t b = Bound<false>(block_max_.data(), block_max_.size(), value);
  return b < blocks_.size() ? b : blocks_.size() - 1;
}

void OrderStatistics::FenwickAdd(std::size_t block, long delta) {
  for (std::size_t i = block + 1; i < fenwick_.size(); i += i & (~i + 1)) {
    fenwick_[i] = static_cast<std::size_t>(static_cast<long>(fenwick_[i]) + delta);
  }
}

void OrderStatistics::RebuildIndex() {
  const std::size_t nb = blocks_.size();
  block_max_.resize(nb);
  fenwick_.assign(nb + 1, 0);
  for (std::size_t b = 0; b < nb; ++b) {
    block_max_[b] = blocks_[b].back();
    fenwick_[b + 1] += blocks_[b].size();
    const std::size_t parent = (b + 1) + ((b + 1) & (~(b + 1) + 1));
    if (parent <= nb) fenwick_[parent] += fenwick_[b + 1];
  }
  fenwick_top_ = 1;
  while (fenwick_top_ * 2 <= nb) fenwick_top_ *= 2;
  if (nb == 0) fenwick_top_ = 0;
}

void OrderStatistics::Insert(double value) {
  ++size_;
  if (blocks_.empty()) {
    blocks_.emplace_back();
    blocks_.back().reserve(kSplitAt);
    blocks_.back().push_back(value);
    RebuildIndex();
    return;
  }
  const std::size_t b = BlockFor(value);
  std::vector<double>& block = blocks_[b];
  const std::size_t at = Bound<true>(block.data(), block.size(), value);
  block.insert(block.begin() + static_cast<std::ptrdiff_t>(at), value);
  block_max_[b] = block.back();
  FenwickAdd(b, +1);
  if (block.size() >= kSplitAt) SplitBlock(b);
}

bool OrderStatistics::Erase(double value) {
  if (blocks_.empty()) return false;
  const std::size_t b = BlockFor(value);
  std::vector<double>& block = blocks_[b];
  const std::size_t at = Bound<false>(block.data(), block.size(), value);
  if (at == block.size() || block[at] != value) return false;
  block.erase(block.begin() + static_cast<std::ptrdiff_t>(at));
  --size_;
  if (block.empty()) {
    blocks_.erase(blocks_.begin() + static_cast<std::ptrdiff_t>(b));
    RebuildIndex();
    return true;
  }
  block_max_[b] = block.back();
  FenwickAdd(b, -1);
  if (block.size() < kMergeBelow && blocks_.size() > 1) MergeSmallBlock(b);
  return true;
}

void OrderStatistics::SplitBlock(std::size_t b) {
  std::vector<double> upper;
  upper.reserve(kSplitAt);
  std::vector<double>& block = blocks_[b];
  const std::size_t half = block.size() / 2;
  upper.assign(block.begin() + static_cast<std::ptrdiff_t>(half), block.end());
  block.resize(half);
  blocks_.insert(blocks_.begin() + static_cast<std::ptrdiff_t>(b + 1), std::move(upper));
  RebuildIndex();
}

void OrderStatistics::MergeSmallBlock(std::size_t b) {
  // Fold block b into its right neighbour (or its left one at the end), keeping order.
  const std::size_t into = b + 1 < blocks_.size() ? b + 1 : b - 1;
  const std::size_t first = std::min(b, into);
  std::vector<double>& low = blocks_[first];
  std::vector<double>& high = blocks_[first + 1];
  low.insert(low.end(), high.begin(), high.end());
  blocks_.erase(blocks_.begin() + static_cast<std::ptrdiff_t>(first + 1));
  if (blocks_[first].size() >= kSplitAt) {
    SplitBlock(first);  // rebuilds the index
  } else {
    RebuildIndex();
  }
}

double OrderStatistics::Select(std::size_t k) const {
  // Fenwick descent: the block whose prefix count passes k.
  std::size_t pos = 0;
  for (std::size_t step = fenwick_top_; step != 0; step >>= 1) {
    const std::size_t next = pos + step;
    if (next < fenwick_.size() && fenwick_[next] <= k) {
      pos = next;
      k -= fenwick_[next];
    }
  }
  return blocks_[pos][k];  // pos = 0-based block index after the descent
}

double OrderStatistics::Quantile(double p, QuantileType type) const {
  const QuantilePosition pos = QuantileAt(size_, p, type);
  const double a = Select(pos.lower);
  const double b = pos.upper == pos.lower ? a : Select(pos.upper);
  return QuantileLerp(a, b, pos.gamma);
}

void OrderStatistics::SortedValues(std::vector<double>* out) const {
  out->clear();
  out->reserve(size_);
  for (const auto& block : blocks_) out->insert(out->end(), block.begin(), block.end());
}

}  // namespace heft
