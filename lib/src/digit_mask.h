// Digit masking for the `tokens` symbolizer's mask_digits: every ASCII digit reads as '0', so
// numbers collapse to their shape. Done on words and vectors in registers, where the text is
// hashed and compared, rather than by writing a masked copy.
#pragma once

#include <cstdint>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace codedrift::digit_mask {

inline constexpr uint64_t kOnes = 0x0101010101010101ull;

// One byte: a digit reads as '0'. For copies of text that is stored masked.
inline char MaskChar(char c) { return c >= '0' && c <= '9' ? '0' : c; }

// Each byte 0x30..0x39 ('0'..'9') becomes 0x30; other bytes are unchanged. Exact per byte:
// no step carries into the neighbouring byte.
inline uint64_t Mask(uint64_t x) {
  const uint64_t high = (x & (0xF0 * kOnes)) ^ (0x30 * kOnes);  // 0 where high nibble is 3
  const uint64_t high_nonzero = (((high & (0x7F * kOnes)) + 0x7F * kOnes) | high) & (0x80 * kOnes);
  const uint64_t low_over_9 = ((x & (0x0F * kOnes)) + 0x76 * kOnes) & (0x80 * kOnes);
  const uint64_t digit = ~(high_nonzero | low_over_9) & (0x80 * kOnes);
  return x & ~((digit >> 7) * 0x0F);  // clear the low nibble of digit bytes
}

#if defined(__SSE2__)
// x + 0x50 maps '0'..'9' (and only them) onto -128..-119 as signed bytes; their low nibble
// is cleared. Zero bytes are no digits, so padding stays zero.
inline __m128i Mask(__m128i v) {
  const __m128i digit = _mm_cmplt_epi8(_mm_add_epi8(v, _mm_set1_epi8(0x50)), _mm_set1_epi8(-118));
  return _mm_andnot_si128(_mm_and_si128(digit, _mm_set1_epi8(0x0F)), v);
}
#endif

}  // namespace codedrift::digit_mask
