// DelimiterSet: the bytes that split a record into tokens, and the token scan of the `tokens`
// symbolizer. The scan tests 16 bytes at a time (SSE2, which every x86-64 has; a byte-table
// loop elsewhere) and walks the resulting bit masks, so its cost per byte stays far below one
// table lookup and one branch per byte.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <cstring>
#include <string_view>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace codedrift {

// Immutable after construction; safe to share between threads. Any set of byte values works;
// non-empty sets of up to kMaxVectorBytes distinct bytes take the vector path.
class DelimiterSet {
 public:
  static constexpr size_t kMaxVectorBytes = 8;

  explicit DelimiterSet(std::string_view delimiters) {
    table_.fill(0);
    for (const char c : delimiters) {
      const auto u = static_cast<unsigned char>(c);
      if (table_[u] != 0) continue;
      table_[u] = 1;
      if (count_ < kMaxVectorBytes) distinct_[count_] = u;
      ++count_;
    }
    // Unused compare slots repeat the first delimiter, so a scan runs a fixed number of
    // compares (4 or 8) and no slot matches a byte outside the set.
    for (size_t i = count_; i < kMaxVectorBytes; ++i) distinct_[i] = distinct_[0];
    compares_ = count_ == 0 ? 0 : count_ <= 4 ? 4 : count_ <= kMaxVectorBytes ? 8 : 0;
  }

  bool Contains(unsigned char c) const { return table_[c] != 0; }

  // Bit i of the result is set when p[i] is a delimiter, for i < n (n <= 64); higher bits are
  // clear. Reads only p[0..n), with no alignment needed. `record_begin` (<= p) is where the
  // readable bytes begin: a tail shorter than 16 bytes is read as the 16 bytes ending at p + n
  // when that stays inside the record.
  __attribute__((always_inline)) uint64_t Mask(const char* record_begin, const char* p,
                                               size_t n) const {
#if defined(__SSE2__)
    if (compares_ == 4) return VectorMask<4>(record_begin, p, n);
    if (compares_ == 8) return VectorMask<8>(record_begin, p, n);
#else
    (void)record_begin;
#endif
    return TableMask(p, n);
  }

  // Calls token(start, length) for every maximal run of non-delimiter bytes of `text`, in order.
  template <class Fn>
  void ForEachToken(std::string_view text, Fn&& token) const {
    ForEachTokenWhile(
        text, [&](const char* start, size_t length) __attribute__((always_inline)) {
          token(start, length);
          return true;
        });
  }

  // The same, stopping after the first call of token(start, length) that returns false.
  template <class Fn>
  void ForEachTokenWhile(std::string_view text, Fn&& token) const {
    const char* const data = text.data();
    const size_t size = text.size();
    size_t start = 0;
    bool in_token = false;
    for (size_t base = 0; base < size; base += 64) {
      const size_t n = size - base < 64 ? size - base : 64;
      uint64_t delimiters = Mask(data, data + base, n);
      if (n < 64) delimiters |= ~uint64_t{0} << n;  // past the end: as if delimiters
      uint64_t ahead = ~uint64_t{0};                // bits at or after the scan position
      while (true) {
        if (!in_token) {
          const uint64_t starts = ~delimiters & ahead;
          if (starts == 0) break;
          const int s = __builtin_ctzll(starts);
          start = base + static_cast<size_t>(s);
          in_token = true;
          ahead = ~uint64_t{0} << s;
        }
        const uint64_t ends = delimiters & ahead;
        if (ends == 0) break;  // the token runs on into the next 64 bytes
        const int e = __builtin_ctzll(ends);
        if (!token(data + start, base + static_cast<size_t>(e) - start)) return;
        in_token = false;
        ahead = ~uint64_t{0} << e;
      }
    }
    // A token that reaches the end of the last full 64 bytes ends with the text.
    if (in_token) (void)token(data + start, size - start);
  }

 private:
  uint64_t TableMask(const char* p, size_t n) const {
    uint64_t mask = 0;
    for (size_t i = 0; i < n; ++i) {
      mask |= uint64_t{table_[static_cast<unsigned char>(p[i])]} << i;
    }
    return mask;
  }

#if defined(__SSE2__)
  // Bits of the bytes of `v` that equal one of the first kCompares delimiter slots.
  template <size_t kCompares>
  uint32_t Match16(__m128i v) const {
    __m128i hit = _mm_cmpeq_epi8(v, _mm_set1_epi8(static_cast<char>(distinct_[0])));
    for (size_t i = 1; i < kCompares; ++i) {
      hit = _mm_or_si128(hit, _mm_cmpeq_epi8(v, _mm_set1_epi8(static_cast<char>(distinct_[i]))));
    }
    return static_cast<uint32_t>(_mm_movemask_epi8(hit));
  }

  static uint64_t Load64(const char* p) {
    uint64_t v;
    std::memcpy(&v, p, 8);
    return v;
  }
  static uint32_t Load32(const char* p) {
    uint32_t v;
    std::memcpy(&v, p, 4);
    return v;
  }

  // The n < 16 bytes at p in the low lanes of a vector (higher lanes zero), read with
  // overlapping loads that stay inside [p, p + n).
  static __m128i LoadShort(const char* p, size_t n) {
    if (n >= 8) {
      const uint64_t low = Load64(p);
      const uint64_t high = n == 8 ? 0 : Load64(p + n - 8) >> (8 * (16 - n));
      return _mm_set_epi64x(static_cast<long long>(high), static_cast<long long>(low));
    }
    uint64_t word = 0;
    if (n >= 4) {
      // Overlapping bytes hold the same value in both loads, so or-ing them is exact.
      word = Load32(p) | uint64_t{Load32(p + n - 4)} << (8 * (n - 4));
    } else if (n > 0) {
      const auto* u = reinterpret_cast<const unsigned char*>(p);
      word = uint64_t{u[0]} | uint64_t{u[n / 2]} << (8 * (n / 2)) |
             uint64_t{u[n - 1]} << (8 * (n - 1));
    }
    return _mm_set_epi64x(0, static_cast<long long>(word));
  }

  template <size_t kCompares>
  __attribute__((always_inline)) uint64_t VectorMask(const char* record_begin, const char* p,
                                                     size_t n) const {
    uint64_t mask = 0;
    size_t i = 0;
    for (; i + 16 <= n; i += 16) {
      const __m128i v = _mm_loadu_si128(reinterpret_cast<const __m128i*>(p + i));
      mask |= uint64_t{Match16<kCompares>(v)} << i;
    }
    const size_t rest = n - i;
    if (rest == 0) return mask;
    const char* const end = p + n;
    if (end - record_begin >= 16) {
      // The 16 bytes ending at `end`; drop the lanes before p + i.
      const __m128i v = _mm_loadu_si128(reinterpret_cast<const __m128i*>(end - 16));
      return mask | uint64_t{Match16<kCompares>(v) >> (16 - rest)} << i;
    }
    const uint32_t lanes = Match16<kCompares>(LoadShort(p + i, rest)) & ((uint32_t{1} << rest) - 1);
    return mask | uint64_t{lanes} << i;
  }
#endif

  std::array<unsigned char, 256> table_;
  std::array<unsigned char, kMaxVectorBytes> distinct_{};
  size_t count_ = 0;     // distinct delimiters
  size_t compares_ = 0;  // vector compares per 16 bytes; 0: the byte-table loop
};

}  // namespace codedrift
