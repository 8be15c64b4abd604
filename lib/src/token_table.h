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
//
// With kMaskDigits, every ASCII digit of the looked-up text reads as '0'. The masking is done
// on 8-byte words in registers while hashing and comparing: writing a masked copy byte by byte
// and reading it back as words stalls on store-to-load forwarding and cost more than the rest
// of the lookup together.
class TokenTable {
 public:
  static constexpr uint32_t kNotFound = UINT32_MAX;

  explicit TokenTable(uint32_t first_id) : first_id_(first_id) { Rehash(kInitialCapacity); }

  // The id of `token` (masked first if kMaskDigits); when it is new, assigns the next id if
  // fewer than `limit` tokens are stored, and otherwise returns kNotFound without storing it.
  template <bool kMaskDigits>
  uint32_t Intern(const char* token, size_t length, uint32_t limit) {
    // Short tokens (nearly all of them in telemetry) are read once into two words that serve
    // both the hash and the comparison.
    Words words{};
    uint64_t hash;
    if (length <= kShort) {
      words = ReadShort<kMaskDigits>(token, length);
      hash = MixShort(words, length);
    } else {
      hash = HashLong<kMaskDigits>(token, length);
    }
    const auto tag = static_cast<uint32_t>(hash >> 32);
    size_t slot = hash & mask_;
    while (true) {
      const Slot& s = slots_[slot];
      if (s.index == kEmpty) break;
      if (s.tag == tag) {
        const Key& key = keys_[s.index];
        const char* stored = arena_.data() + key.offset;
        if (key.length == length &&
            (length <= kShort ? ReadShort<false>(stored, length) == words
                              : EqualLong<kMaskDigits>(stored, token, length))) {
          return first_id_ + s.index;
        }
      }
      slot = (slot + 1) & mask_;
    }
    if (size() >= limit) return kNotFound;
    const auto index = static_cast<uint32_t>(keys_.size());
    slots_[slot] = Slot{tag, index};
    keys_.push_back(Key{arena_.size(), static_cast<uint32_t>(length)});
    for (size_t i = 0; i < length; ++i) {
      const char c = token[i];
      arena_ += kMaskDigits && c >= '0' && c <= '9' ? '0' : c;
    }
    if (2 * keys_.size() > slots_.size()) Rehash(2 * slots_.size());
    return first_id_ + index;
  }

  // Tokens stored so far.
  uint32_t size() const { return static_cast<uint32_t>(keys_.size()); }
  // Text of an id handed out before.
  std::string_view TextOf(uint32_t id) const {
    const Key& key = keys_[id - first_id_];
    return std::string_view(arena_.data() + key.offset, key.length);
  }

 private:
  static constexpr uint32_t kEmpty = UINT32_MAX;
  static constexpr size_t kInitialCapacity = 1024;
  static constexpr uint64_t kOnes = 0x0101010101010101ull;

  struct Slot {
    uint32_t tag = 0;         // high hash bits: most mismatches fail here, before comparing
    uint32_t index = kEmpty;  // into keys_
  };
  struct Key {
    size_t offset;  // in arena_
    uint32_t length;
  };

  // Each byte 0x30..0x39 ('0'..'9') becomes 0x30; other bytes are unchanged. Exact per byte:
  // no step carries into the neighbouring byte.
  static uint64_t MaskDigits(uint64_t x) {
    const uint64_t high = (x & (0xF0 * kOnes)) ^ (0x30 * kOnes);  // 0 where high nibble is 3
    const uint64_t high_nonzero =
        (((high & (0x7F * kOnes)) + 0x7F * kOnes) | high) & (0x80 * kOnes);
    const uint64_t low_over_9 = ((x & (0x0F * kOnes)) + 0x76 * kOnes) & (0x80 * kOnes);
    const uint64_t digit = ~(high_nonzero | low_over_9) & (0x80 * kOnes);
    return x & ~((digit >> 7) * 0x0F);  // clear the low nibble of digit bytes
  }

  template <bool kMaskDigits>
  static uint64_t Load64(const char* p) {
    uint64_t v;
    std::memcpy(&v, p, 8);
    return kMaskDigits ? MaskDigits(v) : v;
  }
  template <bool kMaskDigits>
  static uint64_t Load32(const char* p) {
    uint32_t v;
    std::memcpy(&v, p, 4);
    return kMaskDigits ? MaskDigits(v) : v;
  }
  // 1..3 bytes: first, middle and last byte (together they cover every byte).
  template <bool kMaskDigits>
  static uint64_t LoadShort(const char* p, size_t length) {
    const auto* u = reinterpret_cast<const unsigned char*>(p);
    const uint64_t v = uint64_t{u[0]} << 16 | uint64_t{u[length / 2]} << 8 | u[length - 1];
    return kMaskDigits ? MaskDigits(v) : v;
  }

  // Up to 16 bytes as two words, by overlapping loads (no variable-length memcpy, which is a
  // libc call per token): together they cover every byte, so for a given length equal words
  // mean equal text.
  static constexpr size_t kShort = 16;
  struct Words {
    uint64_t a = 0;
    uint64_t b = 0;
    bool operator==(const Words&) const = default;
  };
  template <bool kMaskDigits>
  static Words ReadShort(const char* p, size_t length) {
    if (length >= 8) return {Load64<kMaskDigits>(p), Load64<kMaskDigits>(p + length - 8)};
    if (length >= 4) return {Load32<kMaskDigits>(p), Load32<kMaskDigits>(p + length - 4)};
    if (length > 0) return {LoadShort<kMaskDigits>(p, length), 0};
    return {};
  }

  // One 64x64->128 multiply folds both words (the wyhash-style "mum"), then a multiply and
  // xor-shift spread the result so that both the low bits (slot) and the high bits (tag)
  // depend on every input bit.
  static uint64_t MixShort(const Words& w, size_t length) {
    __extension__ using Wide = unsigned __int128;
    const Wide product = static_cast<Wide>(w.a ^ 0xA0761D6478BD642Full) *
                         (w.b ^ 0xE7037ED1A0B428DBull ^ (length * 0x8EBC6AF09C88C6E3ull));
    uint64_t h = static_cast<uint64_t>(product) ^ static_cast<uint64_t>(product >> 64);
    h *= 0xBF58476D1CE4E5B9ull;
    h ^= h >> 32;
    return h;
  }

  // Longer tokens: multiply-mix over 8-byte words, the last word overlapping if need be.
  template <bool kMaskDigits>
  static uint64_t HashLong(const char* data, size_t length) {
    constexpr uint64_t kMul = 0x9E3779B97F4A7C15ull;
    uint64_t h = (length + 1) * 0xC2B2AE3D27D4EB4Full;
    for (size_t i = 0; i + 8 < length; i += 8) {
      h = (h ^ Load64<kMaskDigits>(data + i)) * kMul;
      h ^= h >> 32;
    }
    h = (h ^ Load64<kMaskDigits>(data + length - 8)) * kMul;
    h ^= h >> 29;
    h *= 0xBF58476D1CE4E5B9ull;
    h ^= h >> 32;
    return h;
  }

  template <bool kMaskDigits>
  static uint64_t HashOf(const char* data, size_t length) {
    return length <= kShort ? MixShort(ReadShort<kMaskDigits>(data, length), length)
                            : HashLong<kMaskDigits>(data, length);
  }

  // Stored (already masked) text against looked-up text of the same length (> 8 bytes).
  template <bool kMaskDigits>
  static bool EqualLong(const char* stored, const char* text, size_t length) {
    for (size_t i = 0; i + 8 < length; i += 8) {
      if (Load64<false>(stored + i) != Load64<kMaskDigits>(text + i)) return false;
    }
    return Load64<false>(stored + length - 8) == Load64<kMaskDigits>(text + length - 8);
  }

  void Rehash(size_t capacity) {
    slots_.assign(capacity, Slot{});
    mask_ = capacity - 1;
    for (uint32_t index = 0; index < keys_.size(); ++index) {
      // Stored text is already masked, so hashing it unmasked gives the same value.
      const uint64_t hash = HashOf<false>(arena_.data() + keys_[index].offset, keys_[index].length);
      size_t slot = hash & mask_;
      while (slots_[slot].index != kEmpty) slot = (slot + 1) & mask_;
      slots_[slot] = Slot{static_cast<uint32_t>(hash >> 32), index};
    }
  }

  uint32_t first_id_;
  std::vector<Slot> slots_;
  size_t mask_ = 0;
  std::string arena_;      // every stored token, back to back
  std::vector<Key> keys_;  // index -> where its text is
};

}  // namespace codedrift
