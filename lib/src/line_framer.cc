#include <algorithm>
#include <cstring>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif
#if defined(__x86_64__)
#include <immintrin.h>
#endif

#include "codedrift/framer.h"

#include "cpu_features.h"

namespace codedrift {
namespace {

// Offset of the first '\n' in data[0, size), or size when there is none. memchr is the
// vectorised scan the per-chunk budget depends on.
size_t FindNewline(const char* data, size_t size) {
  const void* hit = size == 0 ? nullptr : std::memchr(data, '\n', size);
  return hit == nullptr ? size : static_cast<size_t>(static_cast<const char*>(hit) - data);
}

// Bit i is set when p[i] is '\n', for i < n <= 64. Full blocks take four 16-byte compares
// (SSE2 is part of x86-64); the short tail of a chunk is read byte by byte.
uint64_t NewlineMask(const char* p, size_t n) {
#if defined(__SSE2__)
  if (n == 64) {
    const __m128i newline = _mm_set1_epi8('\n');
    uint64_t mask = 0;
    for (int i = 0; i < 4; ++i) {
      const __m128i v = _mm_loadu_si128(reinterpret_cast<const __m128i*>(p + 16 * i));
      mask |= uint64_t{static_cast<uint32_t>(_mm_movemask_epi8(_mm_cmpeq_epi8(v, newline)))}
              << (16 * i);
    }
    return mask;
  }
#endif
  uint64_t mask = 0;
  for (size_t i = 0; i < n; ++i) mask |= uint64_t{p[i] == '\n'} << i;
  return mask;
}

// Takes one whole 64-byte block whose newlines are `newlines` (bit i: byte base + i): false,
// taking nothing, when the line its first newline ends is longer than `max` (>= 64). Later
// lines of the block are shorter than 64 bytes, so only the first needs the check, and the
// block costs no branch on how many newlines it holds.
__attribute__((always_inline)) inline bool TakeBlock(uint64_t newlines, size_t base, size_t max,
                                                     size_t& line_start, uint64_t& records) {
  const bool any = newlines != 0;
  // Sentinel bits keep ctz/clz defined for a block without newlines (then `any` masks them).
  const size_t first_end = base + static_cast<size_t>(__builtin_ctzll(newlines | 1ull << 63)) + 1;
  const size_t last_end = base + 64 - static_cast<size_t>(__builtin_clzll(newlines | 1));
  if (any & (first_end - line_start > max)) return false;
  records += static_cast<uint64_t>(__builtin_popcountll(newlines));
  line_start = any ? last_end : line_start;
  return true;
}

// Whole 64-byte blocks from the start for as long as TakeBlock takes them; returns where it
// stopped (a multiple of 64). Two versions: AVX2 with POPCNT where the CPU has
// them (the library is built for baseline x86-64), and SSE2 with the portable popcount.
#if defined(__x86_64__)
__attribute__((target("avx2,popcnt,bmi"))) size_t TakeBlocksAvx2(const char* data, size_t size,
                                                                 size_t max, size_t& line_start,
                                                                 uint64_t& records) {
  const __m256i newline = _mm256_set1_epi8('\n');
  size_t base = 0;
  for (; base + 64 <= size; base += 64) {
    const auto* p = reinterpret_cast<const __m256i*>(data + base);
    const auto low = static_cast<uint32_t>(
        _mm256_movemask_epi8(_mm256_cmpeq_epi8(_mm256_loadu_si256(p), newline)));
    const auto high = static_cast<uint32_t>(
        _mm256_movemask_epi8(_mm256_cmpeq_epi8(_mm256_loadu_si256(p + 1), newline)));
    if (!TakeBlock(uint64_t{high} << 32 | low, base, max, line_start, records)) break;
  }
  return base;
}
#endif

size_t TakeBlocks(const char* data, size_t size, size_t max, size_t& line_start,
                  uint64_t& records) {
#if defined(__x86_64__)
  if (CpuHasAvx2()) return TakeBlocksAvx2(data, size, max, line_start, records);
#endif
  size_t base = 0;
  for (; base + 64 <= size; base += 64) {
    if (!TakeBlock(NewlineMask(data + base, 64), base, max, line_start, records)) break;
  }
  return base;
}

}  // namespace

LineFramer::LineFramer(uint32_t max_record_bytes, OverlongPolicy overlong)
    : max_record_bytes_(std::max<uint32_t>(max_record_bytes, 1)), overlong_(overlong) {}

void LineFramer::Emit(std::string_view record, RecordSink sink) {
  ++counters_.records;
  sink(record);
}

void LineFramer::Overlong(std::string_view prefix, RecordSink sink) {
  if (overlong_ == OverlongPolicy::kTruncate) {
    ++counters_.overlong_truncated;
    Emit(prefix, sink);
  } else {
    ++counters_.overlong_dropped;
  }
  discarding_ = true;
}

void LineFramer::Feed(std::string_view chunk, RecordSink sink) {
  const char* data = chunk.data();
  const size_t size = chunk.size();
  size_t pos = 0;
  while (pos < size) {
    const char* rest = data + pos;
    const size_t left = size - pos;
    if (discarding_) {
      const size_t newline = FindNewline(rest, left);
      if (newline == left) return;  // the whole chunk belongs to the overlong line
      discarding_ = false;
      pos += newline + 1;
      continue;
    }
    // A record may hold at most `room` more bytes; a newline must appear within them.
    const size_t room = max_record_bytes_ - carry_.size();
    const size_t scan = std::min(left, room);
    const size_t newline = FindNewline(rest, scan);
    if (newline < scan) {
      if (carry_.empty()) {
        Emit(std::string_view(rest, newline + 1), sink);  // whole line in this chunk: no copy
      } else {
        carry_.append(rest, newline + 1);
        Emit(carry_, sink);
        carry_.clear();
      }
      pos += newline + 1;
      continue;
    }
    if (left <= room) {
      carry_.append(rest, left);  // the line may still end in a later chunk
      return;
    }
    // `room` bytes without a newline and more bytes follow: the line cannot fit.
    if (carry_.empty()) {
      Overlong(std::string_view(rest, room), sink);
    } else {
      carry_.append(rest, room);
      Overlong(carry_, sink);
      carry_.clear();
    }
    pos += room;
  }
}

size_t LineFramer::TakeWholeLines(std::string_view chunk, uint64_t& records) {
  records = 0;
  if (discarding_ || !carry_.empty()) return 0;
  const char* const data = chunk.data();
  const size_t size = chunk.size();
  size_t line_start = 0;  // the end of the last whole line taken
  size_t base = 0;
  if (max_record_bytes_ >= 64)
    base = TakeBlocks(data, size, max_record_bytes_, line_start, records);
  // The tail, a block with an overlong line, and every block under a limit below 64 bytes:
  // newline by newline.
  for (; base < size; base += 64) {
    const size_t n = size - base < 64 ? size - base : 64;
    for (uint64_t newlines = NewlineMask(data + base, n); newlines != 0; newlines &= newlines - 1) {
      const size_t end = base + static_cast<size_t>(__builtin_ctzll(newlines)) + 1;
      if (end - line_start > max_record_bytes_) {  // overlong: Feed decides its fate
        counters_.records += records;
        return line_start;
      }
      line_start = end;
      ++records;
    }
  }
  counters_.records += records;
  return line_start;
}

void LineFramer::Finish(RecordSink sink) {
  if (!discarding_ && !carry_.empty()) {
    ++counters_.unterminated;
    Emit(carry_, sink);
  }
  carry_.clear();
  discarding_ = false;
}

}  // namespace codedrift
