// TokenTable: interns token text to dense ids with an open-addressing hash table sized to stay
// in cache. A lookup touches one 8-byte slot, and only when its 32-bit tag matches, the key's
// 24-byte entry (a short key's text is in the entry itself). Once the table is full, a small
// filter turns away most tokens it does not hold before any slot is read.
#pragma once

#include <cstddef>
#include <cstdint>
#include <cstring>
#include <string>
#include <string_view>
#include <vector>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

#include "digit_mask.h"

namespace codedrift {

// Owns its slots, entries and arena; not thread-safe. Ids start at `first_id`, so a caller can
// keep low ids for reserved symbols.
//
// With kMaskDigits, every ASCII digit of the looked-up text reads as '0'. The masking is done
// on 8-byte words in registers while hashing and comparing: writing a masked copy byte by byte
// and reading it back as words stalls on store-to-load forwarding and cost more than the rest
// of the lookup together.
class TokenTable {
 public:
  static constexpr uint32_t kNotFound = UINT32_MAX;
  static constexpr uint32_t kMissing = UINT32_MAX - 1;  // Find: not stored yet, but storable

  explicit TokenTable(uint32_t first_id) : first_id_(first_id) { Rehash(kInitialCapacity); }

  // The id of `token` (masked first if kMaskDigits); when it is new, assigns the next id if
  // fewer than `limit` tokens are stored, and otherwise returns kNotFound without storing it.
  // The bytes from `readable_begin` (<= token, e.g. the record's start) to the token's end
  // may be read.
  template <bool kMaskDigits>
  __attribute__((always_inline)) uint32_t Intern(const char* readable_begin, const char* token,
                                                 size_t length, uint32_t limit) {
    Words words;
    size_t slot;
    uint32_t tag;
    const uint32_t id = Locate<kMaskDigits>(readable_begin, token, length, limit, words, slot, tag);
    if (id != kMissing) return id;
    return Insert<kMaskDigits>(token, length, limit, words, slot, tag);
  }

  // What Intern would return, without storing anything: kMissing when Intern would store the
  // token. Const, so several threads may call it at once while none calls Intern.
  template <bool kMaskDigits>
  __attribute__((always_inline)) uint32_t Find(const char* readable_begin, const char* token,
                                               size_t length, uint32_t limit) const {
    Words words;
    size_t slot;
    uint32_t tag;
    const uint32_t id = Locate<kMaskDigits>(readable_begin, token, length, limit, words, slot, tag);
    return id == kMissing && size() >= limit ? kNotFound : id;
  }

  // Tokens stored so far.
  uint32_t size() const { return size_; }
  // Text of an id handed out before.
  std::string_view TextOf(uint32_t id) const {
    const uint32_t index = id - first_id_;
    return std::string_view(arena_.data() + offsets_[index], entries_[index].length);
  }

 private:
  static constexpr uint32_t kEmpty = UINT32_MAX;
  static constexpr size_t kInitialCapacity = 1024;
  // Filter bits per stored token: two bits set per token in one 64-bit word gives about 2%
  // false positives at 16 bits per token, in 128 KiB for 65536 tokens (cache-resident).
  static constexpr size_t kFilterBitsPerToken = 16;

  // Up to 16 bytes as two words, by overlapping loads (no variable-length memcpy, which is a
  // libc call per token): together they cover every byte, so for a given length equal words
  // mean equal text.
  static constexpr size_t kShort = 16;
  struct Words {
    uint64_t a = 0;
    uint64_t b = 0;
    bool operator==(const Words&) const = default;
  };

  struct Slot {
    uint32_t tag = 0;         // high hash bits: most mismatches fail here, before comparing
    uint32_t index = kEmpty;  // into entries_
  };
  struct Entry {
    Words words;  // short keys: their (masked) text as ReadShort reads it
    size_t length;
  };

  template <bool kMaskDigits>
  static uint64_t Load64(const char* p) {
#if defined(__SSE2__)
    if (kMaskDigits) {  // the vector masking, a few instructions fewer than the word one
      const __m128i v = _mm_loadl_epi64(reinterpret_cast<const __m128i*>(p));
      return static_cast<uint64_t>(_mm_cvtsi128_si64(digit_mask::Mask(v)));
    }
#endif
    uint64_t v;
    std::memcpy(&v, p, 8);
    return kMaskDigits ? digit_mask::Mask(v) : v;
  }
  template <bool kMaskDigits>
  static uint64_t Load32(const char* p) {
    uint32_t v;
    std::memcpy(&v, p, 4);
    return kMaskDigits ? digit_mask::Mask(v) : v;
  }
  // Short tokens as two words: the token's bytes right-aligned in 16 bytes (byte i at position
  // 16 - length + i, little-endian, a holding positions 0..7), zeros before them. Together
  // with the length this is the text, so equal words mean equal tokens.
  //
  // Most tokens do not start a record, so the 16 bytes ending at the token's end can be read
  // in one load and the bytes before the token cleared, with no branch on the length. The
  // others are read with loads inside the token, shifted into place.
  template <bool kMaskDigits>
  static Words ReadShort(const char* readable_begin, const char* p, size_t length) {
#if defined(__SSE2__)
    if (p + length - readable_begin >= 16) {
      // 16 zero bytes, then 16 0xff: the 16 from offset `length` keep the last `length` lanes.
      alignas(16) static constexpr unsigned char kKeep[32] = {
          0,    0,    0,    0,    0,    0,    0,    0,    0,    0,    0,
          0,    0,    0,    0,    0,    0xff, 0xff, 0xff, 0xff, 0xff, 0xff,
          0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff};
      __m128i v = _mm_loadu_si128(reinterpret_cast<const __m128i*>(p + length - 16));
      v = _mm_and_si128(v, _mm_loadu_si128(reinterpret_cast<const __m128i*>(kKeep + length)));
      if (kMaskDigits) v = digit_mask::Mask(v);
      return {static_cast<uint64_t>(_mm_cvtsi128_si64(v)),
              static_cast<uint64_t>(_mm_cvtsi128_si64(_mm_unpackhi_epi64(v, v)))};
    }
#else
    (void)readable_begin;
#endif
    Words w;
    const auto* u = reinterpret_cast<const unsigned char*>(p);
    if (length >= 8) {
      w.b = Load64<false>(p + length - 8);
      w.a = length > 8 ? Load64<false>(p) << (8 * (16 - length)) : 0;
    } else if (length >= 4) {
      // Overlapping bytes hold the same value in both loads, so or-ing them is exact.
      w.b = Load32<false>(p + length - 4) << 32 | Load32<false>(p) << (8 * (8 - length));
    } else if (length > 0) {
      w.b = uint64_t{u[0]} << (8 * (8 - length)) |
            uint64_t{u[length / 2]} << (8 * (8 - length + length / 2)) |
            uint64_t{u[length - 1]} << 56;
    }
    return kMaskDigits ? MaskDigits(w) : w;
  }

  static Words MaskDigits(Words w) {
#if defined(__SSE2__)
    const __m128i v =
        digit_mask::Mask(_mm_set_epi64x(static_cast<long long>(w.b), static_cast<long long>(w.a)));
    return {static_cast<uint64_t>(_mm_cvtsi128_si64(v)),
            static_cast<uint64_t>(_mm_cvtsi128_si64(_mm_unpackhi_epi64(v, v)))};
#else
    return {digit_mask::Mask(w.a), digit_mask::Mask(w.b)};
#endif
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

  // The hash of stored (already masked) text, which hashing it unmasked reproduces.
  uint64_t StoredHash(uint32_t index) const {
    const Entry& entry = entries_[index];
    return entry.length <= kShort ? MixShort(entry.words, entry.length)
                                  : HashLong<false>(arena_.data() + offsets_[index], entry.length);
  }

  // Stored (already masked) text against looked-up text of the same length (> 8 bytes).
  template <bool kMaskDigits>
  static bool EqualLong(const char* stored, const char* text, size_t length) {
    for (size_t i = 0; i + 8 < length; i += 8) {
      if (Load64<false>(stored + i) != Load64<kMaskDigits>(text + i)) return false;
    }
    return Load64<false>(stored + length - 8) == Load64<kMaskDigits>(text + length - 8);
  }

  // The filter: one 64-bit word per hash (middle bits), two bits in it (low bits, disjoint
  // from the slot's use of them only in part, which costs nothing but a little filtering).
  static uint64_t FilterBits(uint64_t hash) {
    return uint64_t{1} << (hash & 63) | uint64_t{1} << ((hash >> 6) & 63);
  }
  bool MayHold(uint64_t hash) const {
    const uint64_t bits = FilterBits(hash);
    return (filter_[(hash >> 12) & filter_mask_] & bits) == bits;
  }
  void BuildFilter() {
    size_t words = 1;
    while (words * 64 < size_t{size()} * kFilterBitsPerToken) words *= 2;
    filter_.assign(words, 0);
    filter_mask_ = words - 1;
    for (uint32_t index = 0; index < size(); ++index) {
      const uint64_t hash = StoredHash(index);
      filter_[(hash >> 12) & filter_mask_] |= FilterBits(hash);
    }
    filtered_size_ = size();
  }

  // The lookup: the token's id; kNotFound when the filter turns it away (the table is full);
  // otherwise kMissing, with `slot` the empty slot where its probe ended and `words` and `tag`
  // ready for Insert. Short tokens (nearly all of them in telemetry) are read once into two
  // words that serve both the hash and the comparison.
  template <bool kMaskDigits>
  __attribute__((always_inline)) uint32_t Locate(const char* readable_begin, const char* token,
                                                 size_t length, uint32_t limit, Words& words,
                                                 size_t& slot, uint32_t& tag) const {
    words = {};
    uint64_t hash;
    if (length <= kShort) {
      words = ReadShort<kMaskDigits>(readable_begin, token, length);
      hash = MixShort(words, length);
    } else {
      hash = HashLong<kMaskDigits>(token, length);
    }
    // filtered_size_ is kEmpty until the table fills, so one compare skips the filter before.
    if (filtered_size_ == size_ && size_ >= limit && !MayHold(hash)) return kNotFound;
    tag = static_cast<uint32_t>(hash >> 32);
    slot = hash & mask_;
    while (true) {
      const Slot s = slots_[slot];
      if (s.index == kEmpty) return kMissing;
      if (s.tag == tag) {
        const Entry& entry = entries_[s.index];
        if (entry.length == length &&
            (length <= kShort
                 ? entry.words == words
                 : EqualLong<kMaskDigits>(arena_.data() + offsets_[s.index], token, length))) {
          return first_id_ + s.index;
        }
      }
      slot = (slot + 1) & mask_;
    }
  }

  // A token not in the table, whose probe ended at the empty `slot`: stored when there is room
  // (the rare path, kept out of line so the lookup above inlines into the scan). The filter is
  // built as the table fills, so that Find, which cannot build it, has it too.
  template <bool kMaskDigits>
  __attribute__((noinline)) uint32_t Insert(const char* token, size_t length, uint32_t limit,
                                            const Words& words, size_t slot, uint32_t tag) {
    if (size() >= limit) return kNotFound;
    const auto index = static_cast<uint32_t>(entries_.size());
    slots_[slot] = Slot{tag, index};
    entries_.push_back(Entry{words, length});
    ++size_;
    offsets_.push_back(arena_.size());
    for (size_t i = 0; i < length; ++i) {
      const char c = token[i];
      arena_ += kMaskDigits ? digit_mask::MaskChar(c) : c;
    }
    if (2 * entries_.size() > slots_.size()) Rehash(2 * slots_.size());
    if (size() >= limit) BuildFilter();
    return first_id_ + index;
  }

  void Rehash(size_t capacity) {
    slots_.assign(capacity, Slot{});
    mask_ = capacity - 1;
    for (uint32_t index = 0; index < entries_.size(); ++index) {
      const uint64_t hash = StoredHash(index);
      size_t slot = hash & mask_;
      while (slots_[slot].index != kEmpty) slot = (slot + 1) & mask_;
      slots_[slot] = Slot{static_cast<uint32_t>(hash >> 32), index};
    }
  }

  uint32_t first_id_;
  std::vector<Slot> slots_;
  size_t mask_ = 0;
  std::vector<Entry> entries_;   // index -> length and, for short keys, text
  uint32_t size_ = 0;            // entries_.size(), kept apart: every lookup reads it
  std::vector<size_t> offsets_;  // index -> where its text starts in arena_
  std::string arena_;            // every stored token, back to back
  // Built when the table fills; valid while size() == filtered_size_ (no token is stored after
  // it, so a token it turns away is neither stored nor storable).
  std::vector<uint64_t> filter_;
  size_t filter_mask_ = 0;
  uint32_t filtered_size_ = kEmpty;
};

}  // namespace codedrift
