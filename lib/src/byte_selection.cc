#include "codedrift/byte_selection.h"

#include <algorithm>

#include "codedrift/byte_histogram.h"

#include "cpu_features.h"

#if defined(__x86_64__)
#include <immintrin.h>
#endif

namespace codedrift {
namespace {

// Data whose first kProbeBytes hold more than one selected byte in kDenseFraction is counted
// whole (see CountWith).
constexpr size_t kProbeBytes = 4096;
constexpr uint64_t kDenseFraction = 8;

// The sparse counters return how many selected bytes they found.
uint64_t CountSelectedScalar(const unsigned char* p, size_t n, const std::bitset<256>& bytes,
                             uint64_t (&histogram)[256]) {
  uint64_t found = 0;
  for (size_t i = 0; i < n; ++i) {
    if (bytes[p[i]]) {
      ++histogram[p[i]];
      ++found;
    }
  }
  return found;
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

__attribute__((target("avx2"))) uint64_t CountSelectedAvx2(const unsigned char* p, size_t n,
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
  uint64_t found = 0;
  size_t i = 0;
  for (; i + 64 <= n; i += 64) {
    const auto* v = reinterpret_cast<const __m256i*>(p + i);
    uint64_t hits =
        Selected32(_mm256_loadu_si256(v), rows_low, rows_high, bit_of_high) |
        uint64_t{Selected32(_mm256_loadu_si256(v + 1), rows_low, rows_high, bit_of_high)} << 32;
    while (hits != 0) {
      ++histogram[p[i + static_cast<size_t>(__builtin_ctzll(hits))]];
      hits &= hits - 1;
      ++found;
    }
  }
  return found + CountSelectedScalar(p + i, n - i, bytes, histogram);
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
  CountWith(data, histogram, CpuHasAvx2());
}

void ByteSelection::CountPortable(std::string_view data, uint64_t (&histogram)[256]) const {
  CountWith(data, histogram, false);
}

uint64_t ByteSelection::CountSparse(std::string_view data, uint64_t (&histogram)[256],
                                    [[maybe_unused]] bool vector) const {
  const auto* p = reinterpret_cast<const unsigned char*>(data.data());
#if defined(__x86_64__)
  if (vector) return CountSelectedAvx2(p, data.size(), rows_, bytes_, histogram);
#endif
  return CountSelectedScalar(p, data.size(), bytes_, histogram);
}

// Selected bytes are found one by one, which pays while they are rare (the bytes a deployed
// table lacks). When most bytes are selected (a table made for other traffic, a sender of
// random bytes), counting every byte and keeping the selected counts is faster: a probe of the
// first kProbeBytes decides which way the rest goes.
void ByteSelection::CountWith(std::string_view data, uint64_t (&histogram)[256],
                              bool vector) const {
  if (none() || data.empty()) return;
  if (all()) {
    CountBytes(data, histogram);
    return;
  }
  const size_t probe = std::min(data.size(), kProbeBytes);
  const uint64_t found = CountSparse(data.substr(0, probe), histogram, vector);
  const std::string_view rest = data.substr(probe);
  if (found * kDenseFraction <= probe) {
    CountSparse(rest, histogram, vector);
    return;
  }
  uint64_t every[256] = {};
  CountBytes(rest, every);
  for (size_t byte = 0; byte < 256; ++byte) {
    if (bytes_[byte]) histogram[byte] += every[byte];
  }
}

}  // namespace codedrift
