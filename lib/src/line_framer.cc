#include <algorithm>
#include <cstring>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

#include "codedrift/framer.h"

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
  for (size_t base = 0; base < size; base += 64) {
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
