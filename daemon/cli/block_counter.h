// Counting the symbol stream's non-overlapping n-symbol blocks (the extended source S^n as a
// block code sees it), for the block entropies H(S^n)/n of `inspect --orders`.
#pragma once

#include <cstdint>
#include <span>
#include <vector>

#include "codedrift/symbolizer.h"

namespace codedrift::cli {

// Counts blocks of `order` (2..4) consecutive symbol ids, blocks taken back to back from the
// first id it is given; ids given in several calls form one stream. Open addressing over the
// packed block: O(1) per block, memory O(distinct blocks). Not thread-safe.
class BlockCounter {
 public:
  explicit BlockCounter(int order);

  void Add(std::span<const SymbolId> ids);

  int order() const { return order_; }
  uint64_t blocks() const { return blocks_; }  // complete blocks counted
  uint64_t distinct() const { return used_; }
  // Nonzero counts, in no particular order.
  std::vector<uint64_t> Values() const;

 private:
  struct Slot {
    uint64_t low = 0;
    uint64_t high = 0;
    uint64_t count = 0;  // 0: empty
  };
  void Insert(uint64_t low, uint64_t high);
  void Grow();

  int order_;
  SymbolId pending_[4] = {};
  int pending_count_ = 0;
  uint64_t blocks_ = 0;
  uint64_t used_ = 0;
  std::vector<Slot> slots_;
  size_t mask_;
};

// Counts of dense ids in a plain array that grows with the largest id seen.
class DenseCounter {
 public:
  void Add(std::span<const SymbolId> ids);
  uint64_t total() const { return total_; }
  const std::vector<uint64_t>& counts() const { return counts_; }
  std::vector<uint64_t> Values() const;  // nonzero counts

 private:
  std::vector<uint64_t> counts_;
  uint64_t total_ = 0;
};

}  // namespace codedrift::cli
