#include "codedrift/byte_selection.h"

#include "codedrift/byte_histogram.h"

#if defined(__x86_64__)
#include <immintrin.h>
#endif

namespace codedrift {
namespace {

void CountSelectedScalar(const unsigned char* p, size_t n, const std::bitset<256>& bytes,
                         uint64_t (&histogram)[256]) {
  for (size_t i = 0; i < n; ++i) {
    if (bytes[p[i]]) ++histogram[p[i]];
  }
}

#if defined(__x86_64__)
// Set membership of 32 bytes at once (the nibble-table method): the low nibble picks a row of
// the selection, the high nibble picks a bit of it. Only the CPUs with AVX2 take this path;
// the library is built for baseline x86-64.
__attribute__((target("avx2"))) uint32_t Selected32(__m256i x, __m256i rows_low, __m256i rows_high,
                                                    __m256i bit_of_high) {
  const __m256i nibble = _mm256_set1_epi8(0x0F);
  const __m256i low = _mm256_and_si256(x, nibble);
  const __m256i high = _mm256_and_si256(_mm256_srli_epi16(x, 4), nibble);
  // blendv takes rows_high where the byte's top bit (high nibble >= 8) is set.
  const __m256i row = _mm256_blendv_epi8(_mm256_shuffle_epi8(rows_low, low),
                                         _mm256_shuffle_epi8(rows_high, low), x);
  const __m256i bit = _mm256_shuffle_epi8(bit_of_high, high);
  const __m256i hit = _mm256_cmpeq_epi8(_mm256_and_si256(row, bit), bit);
  return static_cast<uint32_t>(_mm256_movemask_epi8(hit));
}

__attribute__((target("avx2"))) void CountSelectedAvx2(const unsigned char* p, size_t n,
                                                       const uint8_t (&rows)[2][16],
                                                       const std::bitset<256>& bytes,
                                                       uint64_t (&histogram)[256]) {
  const __m256i rows_low =
      _mm256_broadcastsi128_si256(_mm_load_si128(reinterpret_cast<const __m128i*>(rows[0])));
  const __m256i rows_high =
      _mm256_broadcastsi128_si256(_mm_load_si128(reinterpret_cast<const __m128i*>(rows[1])));
  const __m256i bit_of_high =
      _mm256_setr_epi8(1, 2, 4, 8, 16, 32, 64, -128, 1, 2, 4, 8, 16, 32, 64, -128,  //
                       1, 2, 4, 8, 16, 32, 64, -128, 1, 2, 4, 8, 16, 32, 64, -128);
  size_t i = 0;
  for (; i + 64 <= n; i += 64) {
    const auto* v = reinterpret_cast<const __m256i*>(p + i);
    uint64_t hits =
        Selected32(_mm256_loadu_si256(v), rows_low, rows_high, bit_of_high) |
        uint64_t{Selected32(_mm256_loadu_si256(v + 1), rows_low, rows_high, bit_of_high)} << 32;
    while (hits != 0) {
      ++histogram[p[i + static_cast<size_t>(__builtin_ctzll(hits))]];
      hits &= hits - 1;
    }
  }
  CountSelectedScalar(p + i, n - i, bytes, histogram);
}

bool HasAvx2() {
  static const bool has = __builtin_cpu_supports("avx2");
  return has;
}
#endif

}  // namespace

ByteSelection::ByteSelection(const std::bitset<256>& bytes) : bytes_(bytes) {
  for (unsigned byte = 0; byte < 256; ++byte) {
    if (!bytes_[byte]) continue;
    const unsigned high = byte >> 4;
    rows_[high >> 3][byte & 0x0F] |= static_cast<uint8_t>(1u << (high & 7));
  }
}

void ByteSelection::Count(std::string_view data, uint64_t (&histogram)[256]) const {
  if (none() || data.empty()) return;
  if (all()) {
    CountBytes(data, histogram);
    return;
  }
  const auto* p = reinterpret_cast<const unsigned char*>(data.data());
#if defined(__x86_64__)
  if (HasAvx2()) {
    CountSelectedAvx2(p, data.size(), rows_, bytes_, histogram);
    return;
  }
#endif
  CountPortable(data, histogram);
}

void ByteSelection::CountPortable(std::string_view data, uint64_t (&histogram)[256]) const {
  CountSelectedScalar(reinterpret_cast<const unsigned char*>(data.data()), data.size(), bytes_,
                      histogram);
}

}  // namespace codedrift
