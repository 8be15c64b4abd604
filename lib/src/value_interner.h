// ValueInterner: maps 32-bit values (packed byte blocks, wide field values) to dense ids 0, 1, 2,
// ... in order of first appearance, so counting arrays stay as small as the values in use.
#pragma once

#include <bit>
#include <cstddef>
#include <cstdint>
#include <utility>
#include <vector>

namespace codedrift {

// Open-addressing table (linear probing, power-of-two capacity, load <= 1/2) from value to id.
// Owns its storage; not thread-safe. Storage grows with the values kept, so callers facing
// untrusted input pass a `limit` (the table then never holds more than `limit` values).
class ValueInterner {
 public:
  static constexpr uint32_t kNotFound = UINT32_MAX;
  static constexpr uint32_t kNoLimit = UINT32_MAX;

  ValueInterner() { Rehash(kInitialCapacity); }

  // The id of `value`. On first sight it assigns the next dense id if fewer than `limit`
  // values are stored, and otherwise returns kNotFound without storing the value.
  uint32_t Intern(uint32_t value, uint32_t limit = kNoLimit) {
    size_t slot = Home(value);
    while (true) {
      Slot& s = slots_[slot];
      if (s.id == kEmpty) break;
      if (s.value == value) return s.id;
      slot = (slot + 1) & mask_;
    }
    if (values_.size() >= limit) return kNotFound;
    const auto id = static_cast<uint32_t>(values_.size());
    slots_[slot] = Slot{value, id};
    values_.push_back(value);
    if (2 * values_.size() > slots_.size()) Rehash(2 * slots_.size());
    return id;
  }

  // Value of an id handed out before.
  uint32_t ValueOf(uint32_t id) const { return values_[id]; }
  uint32_t size() const { return static_cast<uint32_t>(values_.size()); }

 private:
  static constexpr uint32_t kEmpty = UINT32_MAX;
  static constexpr size_t kInitialCapacity = 1024;

  struct Slot {
    uint32_t value = 0;
    uint32_t id = kEmpty;
  };

  // Multiplicative (Fibonacci) hashing: the top bits of value * 2^64/phi spread nearby values
  // (consecutive field readings, blocks sharing a prefix) across the table.
  size_t Home(uint32_t value) const {
    return static_cast<size_t>((uint64_t{value} * 0x9E3779B97F4A7C15ull) >> shift_);
  }

  void Rehash(size_t capacity) {
    slots_.assign(capacity, Slot{});
    mask_ = capacity - 1;
    shift_ = 64 - std::countr_zero(capacity);
    for (uint32_t id = 0; id < values_.size(); ++id) {
      size_t slot = Home(values_[id]);
      while (slots_[slot].id != kEmpty) slot = (slot + 1) & mask_;
      slots_[slot] = Slot{values_[id], id};
    }
  }

  std::vector<Slot> slots_;
  std::vector<uint32_t> values_;  // id -> value
  size_t mask_ = 0;
  int shift_ = 64;
};

// A ValueInterner that keeps at most `max_distinct` values: they get ids 0 .. max_distinct - 1
// in order of first appearance, and every value first seen after that shares the overflow id
// `max_distinct`. So ids before the cap are the same as without it, and memory stays bounded
// whatever a sender makes up. Owns its storage; not thread-safe.
class CappedValueInterner {
 public:
  explicit CappedValueInterner(uint32_t max_distinct) : max_distinct_(max_distinct) {}

  uint32_t Intern(uint32_t value) {
    const uint32_t id = values_.Intern(value, max_distinct_);
    return id == ValueInterner::kNotFound ? max_distinct_ : id;
  }

  // Once the table is full the overflow id counts as handed out (it may come any moment), so
  // arrays sized by IdLimit never need to grow again.
  uint32_t IdLimit() const { return full() ? max_distinct_ + 1 : values_.size(); }
  bool IsOverflow(uint32_t id) const { return id >= values_.size(); }
  // Value of an id handed out before, other than the overflow id.
  uint32_t ValueOf(uint32_t id) const { return values_.ValueOf(id); }
  // Values kept (the overflow id not included).
  uint32_t size() const { return values_.size(); }
  uint32_t max_distinct() const { return max_distinct_; }

  // Takes over `values` as ids 0, 1, ... (a checkpoint). False, leaving the table as it was,
  // when there are more than max_distinct of them or one repeats.
  bool Restore(const std::vector<uint32_t>& values) {
    if (values.size() > max_distinct_) return false;
    ValueInterner restored;
    for (const uint32_t value : values) {
      if (restored.Intern(value) + 1 != restored.size()) return false;
    }
    values_ = std::move(restored);
    return true;
  }

 private:
  bool full() const { return values_.size() >= max_distinct_; }

  uint32_t max_distinct_;
  ValueInterner values_;
};

}  // namespace codedrift
