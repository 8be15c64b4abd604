#include "block_counter.h"

#include <algorithm>

namespace codedrift::cli {
namespace {

constexpr size_t kInitialSlots = size_t{1} << 12;

// Multiply-xorshift mix of the packed block; the low bits index the table.
size_t HashBlock(uint64_t low, uint64_t high) {
  uint64_t h = low * 0x9e3779b97f4a7c15ull ^ (high + 0x632be59bd9b4e019ull) * 0xc2b2ae3d27d4eb4full;
  h ^= h >> 29;
  h *= 0xbf58476d1ce4e5b9ull;
  h ^= h >> 32;
  return static_cast<size_t>(h);
}

uint64_t PackLow(const SymbolId* block) { return uint64_t{block[0]} | (uint64_t{block[1]} << 32); }

uint64_t PackHigh(const SymbolId* block, int order) {
  if (order < 3) return 0;
  return uint64_t{block[2]} | (order > 3 ? uint64_t{block[3]} << 32 : 0);
}

}  // namespace

BlockCounter::BlockCounter(int order, int skip)
    : order_(std::clamp(order, 2, 4)),
      skip_(std::clamp(skip, 0, 3)),
      slots_(kInitialSlots),
      mask_(kInitialSlots - 1) {}

void BlockCounter::Add(std::span<const SymbolId> ids) {
  size_t i = 0;
  while (head_count_ < skip_ && i < ids.size()) head_[head_count_++] = ids[i++];
  for (; i < ids.size(); ++i) {
    pending_[pending_count_++] = ids[i];
    if (pending_count_ < order_) continue;
    pending_count_ = 0;
    Insert(PackLow(pending_), PackHigh(pending_, order_), 1);
  }
}

void BlockCounter::AddBlock(const SymbolId* block, uint64_t count) {
  if (count > 0) Insert(PackLow(block), PackHigh(block, order_), count);
}

void BlockCounter::Insert(uint64_t low, uint64_t high, uint64_t count) {
  blocks_ += count;
  for (size_t i = HashBlock(low, high) & mask_;; i = (i + 1) & mask_) {
    Slot& slot = slots_[i];
    if (slot.count == 0) {
      slot = {low, high, count};
      if (++used_ * 2 > slots_.size()) Grow();
      return;
    }
    if (slot.low == low && slot.high == high) {
      slot.count += count;
      return;
    }
  }
}

void BlockCounter::Grow() {
  std::vector<Slot> old(slots_.size() * 2);
  old.swap(slots_);
  mask_ = slots_.size() - 1;
  for (const Slot& slot : old) {
    if (slot.count == 0) continue;
    size_t i = HashBlock(slot.low, slot.high) & mask_;
    while (slots_[i].count != 0) i = (i + 1) & mask_;
    slots_[i] = slot;
  }
}

std::vector<uint64_t> BlockCounter::Values() const {
  std::vector<uint64_t> values;
  values.reserve(used_);
  for (const Slot& slot : slots_) {
    if (slot.count != 0) values.push_back(slot.count);
  }
  return values;
}

void DenseCounter::Add(std::span<const SymbolId> ids) {
  for (const SymbolId id : ids) {
    if (id >= counts_.size()) counts_.resize(std::max<size_t>(id + size_t{1}, counts_.size() * 2));
    ++counts_[id];
  }
  total_ += ids.size();
}

std::vector<uint64_t> DenseCounter::Values() const {
  std::vector<uint64_t> values;
  for (const uint64_t count : counts_) {
    if (count != 0) values.push_back(count);
  }
  return values;
}

}  // namespace codedrift::cli
