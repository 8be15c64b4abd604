// Counting the symbol stream's non-overlapping n-symbol blocks (the extended source S^n as a
// block code sees it), for the block entropies H(S^n)/n of `inspect --orders`.
#pragma once

#include <cstdint>
#include <span>
#include <vector>

#include "codedrift/symbolizer.h"

namespace codedrift::cli {

// Counts blocks of `order` (2..4) consecutive symbol ids, blocks taken back to back from the
// first id it is given after `skip` ids (kept aside as head(), for a caller that joins
// streams); ids given in several calls form one stream. Open addressing over the packed
// block: O(1) per block, memory O(distinct blocks). Not thread-safe.
class BlockCounter {
 public:
  explicit BlockCounter(int order, int skip = 0);

  void Add(std::span<const SymbolId> ids);
  // Adds `count` occurrences of one whole block of order() ids (merging counters).
  void AddBlock(const SymbolId* block, uint64_t count);
  // Calls fn(block ids, count) for every distinct block.
  template <class Fn>
  void ForEach(Fn&& fn) const {
    for (const Slot& slot : slots_) {
      if (slot.count == 0) continue;
      const SymbolId block[4] = {
          static_cast<SymbolId>(slot.low), static_cast<SymbolId>(slot.low >> 32),
          static_cast<SymbolId>(slot.high), static_cast<SymbolId>(slot.high >> 32)};
      fn(std::span<const SymbolId>(block, static_cast<size_t>(order_)), slot.count);
    }
  }
  // The skipped ids at the start and the ids of the unfinished block at the end.
  std::span<const SymbolId> head() const { return {head_, static_cast<size_t>(head_count_)}; }
  std::span<const SymbolId> pending() const {
    return {pending_, static_cast<size_t>(pending_count_)};
  }

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
  void Insert(uint64_t low, uint64_t high, uint64_t count);
  void Grow();

  int order_;
  int skip_;
  SymbolId head_[4] = {};
  int head_count_ = 0;
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
