// TokenTable: interns token text to dense ids with an open-addressing hash table whose keys
// live in one arena, so a lookup touches one slot and one contiguous key.
#pragma once

#include <cstddef>
#include <cstdint>
#include <cstring>
#include <string>
#include <string_view>
#include <vector>

namespace codedrift {

// Owns its slots and arena; not thread-safe. Ids start at `first_id`, so a caller can keep
// low ids for reserved symbols.
class TokenTable {
 public:
  static constexpr uint32_t kNotFound = UINT32_MAX;

  explicit TokenTable(uint32_t first_id) : first_id_(first_id) { Rehash(kInitialCapacity); }

  // The id of `token`; when the token is new, assigns the next id if fewer than `limit` tokens
  // are stored, and otherwise returns kNotFound without storing it.
  uint32_t Intern(const char* token, size_t length, uint32_t limit) {
    const uint64_t hash = Hash(token, length);
    const auto tag = static_cast<uint32_t>(hash >> 32);
    size_t slot = hash & mask_;
    while (true) {
      const Slot& s = slots_[slot];
      if (s.index == kEmpty) break;
      if (s.tag == tag && lengths_[s.index] == length &&
          std::memcmp(arena_.data() + offsets_[s.index], token, length) == 0) {
        return first_id_ + s.index;
      }
      slot = (slot + 1) & mask_;
    }
    if (size() >= limit) return kNotFound;
    const auto index = static_cast<uint32_t>(offsets_.size());
    slots_[slot] = Slot{tag, index};
    offsets_.push_back(arena_.size());
    lengths_.push_back(static_cast<uint32_t>(length));
    arena_.append(token, length);
    if (2 * offsets_.size() > slots_.size()) Rehash(2 * slots_.size());
    return first_id_ + index;
  }

  // Tokens stored so far.
  uint32_t size() const { return static_cast<uint32_t>(offsets_.size()); }
  // Text of an id handed out before.
  std::string_view TextOf(uint32_t id) const {
    const uint32_t index = id - first_id_;
    return std::string_view(arena_.data() + offsets_[index], lengths_[index]);
  }

  // 64-bit multiply-mix over 8-byte words: a few cycles per word, and the final fold lets
  // both the low bits (slot) and the high bits (tag) depend on every input byte.
  static uint64_t Hash(const char* data, size_t length) {
    constexpr uint64_t kMul = 0x9E3779B97F4A7C15ull;
    uint64_t h = length * 0xC2B2AE3D27D4EB4Full;
    size_t i = 0;
    for (; i + 8 <= length; i += 8) {
      uint64_t word;
      std::memcpy(&word, data + i, 8);
      h = (h ^ word) * kMul;
      h ^= h >> 32;
    }
    if (i < length) {
      uint64_t word = 0;
      std::memcpy(&word, data + i, length - i);
      h = (h ^ word) * kMul;
    }
    h ^= h >> 29;
    h *= 0xBF58476D1CE4E5B9ull;
    h ^= h >> 32;
    return h;
  }

 private:
  static constexpr uint32_t kEmpty = UINT32_MAX;
  static constexpr size_t kInitialCapacity = 1024;

  struct Slot {
    uint32_t tag = 0;         // high hash bits: most mismatches fail here, before memcmp
    uint32_t index = kEmpty;  // into offsets_/lengths_
  };

  void Rehash(size_t capacity) {
    slots_.assign(capacity, Slot{});
    mask_ = capacity - 1;
    for (uint32_t index = 0; index < offsets_.size(); ++index) {
      const uint64_t hash = Hash(arena_.data() + offsets_[index], lengths_[index]);
      size_t slot = hash & mask_;
      while (slots_[slot].index != kEmpty) slot = (slot + 1) & mask_;
      slots_[slot] = Slot{static_cast<uint32_t>(hash >> 32), index};
    }
  }

  uint32_t first_id_;
  std::vector<Slot> slots_;
  size_t mask_ = 0;
  std::string arena_;              // every stored token, back to back
  std::vector<size_t> offsets_;    // index -> start in arena_
  std::vector<uint32_t> lengths_;  // index -> length
};

}  // namespace codedrift
