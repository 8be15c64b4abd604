// ValueInterner: maps 32-bit values (packed byte blocks, wide field values) to dense ids 0, 1, 2,
// ... in order of first appearance, so counting arrays stay as small as the values in use.
#pragma once

#include <bit>
#include <cstddef>
#include <cstdint>
#include <vector>

namespace codedrift {

// Open-addressing table (linear probing, power-of-two capacity, load <= 1/2) from value to id.
// Owns its storage; not thread-safe.
class ValueInterner {
 public:
  ValueInterner() { Rehash(kInitialCapacity); }

  // The id of `value`, assigning the next dense id on first sight.
  uint32_t Intern(uint32_t value) {
    size_t slot = Home(value);
    while (true) {
      Slot& s = slots_[slot];
      if (s.id == kEmpty) break;
      if (s.value == value) return s.id;
      slot = (slot + 1) & mask_;
    }
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

}  // namespace codedrift
