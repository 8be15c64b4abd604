// LineMemo: the ids the `tokens` symbolizer gave whole lines it has seen, keyed by the line's
// text as the symbolizer reads it (digits masked when it masks them). Telemetry lines repeat a
// few hundred shapes once their digits are masked, and a repeated line then costs one pass
// over its text (find the newline, mask, hash) and one compare, instead of a table lookup per
// token. While lines do not repeat (digits kept, every timestamp new) the memo turns itself
// off for a stretch and tries again.
//
// A memo serves one token table at a time: ids only ever grow in a table, so an entry stays
// true until the table is replaced, which Use detects by the table's generation.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <cstring>
#include <span>
#include <vector>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

#include "codedrift/symbolizer.h"

#include "digit_mask.h"

namespace codedrift {

// One line as the memo keys it: its length, and its text (masked) in 16-byte chunks, the last
// one zero-padded; with the length, the chunks are the text. The hash covers all of it.
struct LineScan {
  static constexpr size_t kChunk = 16;
  static constexpr size_t kMaxLength = 1024;  // longer lines are symbolized token by token
  static constexpr size_t kMaxChunks = kMaxLength / kChunk + 1;

  size_t length = 0;
  uint64_t hash = 0;
  bool fits = false;  // length <= kMaxLength: chunks and hash are set
  alignas(16) unsigned char text[kMaxChunks * kChunk];

  size_t chunks() const { return length / kChunk + 1; }

  // Scans the line that starts at `line`, up to its newline (which `end` bounds): false when
  // there is none before `end`. Reads no byte at or after `end`.
  template <bool kMaskDigits>
  bool Read(const char* line, const char* end);
};

// Not thread-safe: one thread at a time (LineMemoPool hands them out).
class LineMemo {
 public:
  // What one memo holds before it starts over (about 0.6 MiB at most).
  static constexpr size_t kMaxEntries = 4096;
  static constexpr size_t kMaxTextBytes = size_t{256} << 10;
  static constexpr size_t kMaxIds = size_t{64} << 10;
  // The judgement: over every kJudgedLookups lookups, at least one in kMinHitsPer must hit,
  // or the memo is off for the next kOffBytes bytes of runs. A miss costs a fraction of
  // symbolizing the line token by token; a hit saves most of it.
  static constexpr uint32_t kJudgedLookups = 4096;
  static constexpr uint32_t kMinHitsPer = 4;
  static constexpr uint64_t kOffBytes = uint64_t{16} << 20;
  // Ids readable past each line's ids, so that they can be copied 4 at a time.
  static constexpr size_t kIdPadding = 3;

  struct Stats {
    uint64_t lookups = 0;
    uint64_t hits = 0;
    uint64_t clears = 0;      // times it was full and started over
    uint64_t turned_off = 0;  // times it judged itself not worth it
  };

  LineMemo();

  // Before each run of lines: whether to use the memo on a run of `run_bytes` bytes from the
  // table of `generation` (a different table than before empties the memo first).
  bool Use(uint64_t generation, size_t run_bytes);

  // The ids of a line remembered before (not counting its end of record), or false.
  bool Find(const LineScan& line, std::span<const SymbolId>& ids) {
    for (size_t slot = line.hash & (kSlots - 1);; slot = (slot + 1) & (kSlots - 1)) {
      const uint32_t index = slots_[slot];
      if (index == kEmpty) break;
      const Entry& entry = entries_[index];
      if (entry.hash == line.hash && entry.length == line.length &&
          SameChunks(text_.data() + entry.text, line.text, line.chunks())) {
        ids = {ids_.data() + entry.ids, entry.id_count};
        Judge(true);
        return true;
      }
    }
    Judge(false);
    return false;
  }

  // Remembers a line that Find did not know, and its ids.
  void Remember(const LineScan& line, std::span<const SymbolId> ids);

  const Stats& stats() const { return stats_; }

 private:
  struct Entry {
    uint64_t hash;
    uint32_t text;  // offset in text_ of its chunks
    uint32_t ids;   // offset in ids_
    uint16_t length;
    uint16_t id_count;
  };
  static constexpr size_t kSlots = 2 * kMaxEntries;  // power of two, at most half full
  static constexpr uint32_t kEmpty = UINT32_MAX;

  static bool SameChunks(const unsigned char* a, const unsigned char* b, size_t chunks) {
#if defined(__SSE2__)
    __m128i diff = _mm_setzero_si128();
    for (size_t i = 0; i < chunks * LineScan::kChunk; i += LineScan::kChunk) {
      diff = _mm_or_si128(diff,
                          _mm_xor_si128(_mm_loadu_si128(reinterpret_cast<const __m128i*>(a + i)),
                                        _mm_load_si128(reinterpret_cast<const __m128i*>(b + i))));
    }
    return _mm_movemask_epi8(_mm_cmpeq_epi8(diff, _mm_setzero_si128())) == 0xFFFF;
#else
    return std::memcmp(a, b, chunks * LineScan::kChunk) == 0;
#endif
  }

  void Clear();
  // Counts a lookup; every kJudgedLookups of them, JudgeStretch decides whether to go on.
  void Judge(bool hit) {
    ++stats_.lookups;
    stats_.hits += hit ? 1 : 0;
    judged_hits_ += hit ? 1 : 0;
    if (++judged_lookups_ == kJudgedLookups) JudgeStretch();
  }
  void JudgeStretch();

  std::vector<uint32_t> slots_;  // entry index or kEmpty, by hash
  std::vector<Entry> entries_;
  std::vector<unsigned char> text_;  // stored lines' chunks, back to back
  std::vector<SymbolId> ids_;
  uint64_t generation_ = 0;  // of the table the entries came from (0: none yet)
  uint64_t off_bytes_ = 0;   // bytes of runs left before the memo is tried again
  uint32_t judged_lookups_ = 0;
  uint32_t judged_hits_ = 0;
  Stats stats_;
};

namespace line_scan {

// splitmix64 from seed 0: any well-mixed constants would do.
constexpr std::array<uint64_t, 32> HashKeys() {
  std::array<uint64_t, 32> keys{};
  uint64_t state = 0;
  for (uint64_t& key : keys) {
    uint64_t z = (state += 0x9E3779B97F4A7C15ull);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
    key = z ^ (z >> 31);
  }
  return keys;
}
// 16 keys of 16 bytes, cycled over the chunks of a line, so that moving text from one chunk
// to another changes the hash.
alignas(16) inline constexpr std::array<uint64_t, 32> kKeys = HashKeys();

inline uint64_t Finish(uint64_t h, size_t length) {
  h ^= length * 0x9E3779B97F4A7C15ull;
  h *= 0x94D049BB133111EBull;
  return h ^ (h >> 32);
}

}  // namespace line_scan

#if defined(__SSE2__)
template <bool kMaskDigits>
__attribute__((always_inline)) inline bool LineScan::Read(const char* line, const char* end) {
  // keep + 16 - n: the first n lanes all ones, the rest zero.
  alignas(16) static constexpr unsigned char kKeep[32] = {
      0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff,
      0xff, 0xff, 0xff, 0xff, 0xff, 0,    0,    0,    0,    0,    0,
      0,    0,    0,    0,    0,    0,    0,    0,    0,    0};
  const __m128i newline = _mm_set1_epi8('\n');
  __m128i acc = _mm_setzero_si128();
  for (size_t i = 0, chunk = 0;; i += kChunk, ++chunk) {
    const char* const p = line + i;
    if (p >= end) return false;
    __m128i raw;
    uint32_t newlines;
    if (end - p >= static_cast<ptrdiff_t>(kChunk)) {
      raw = _mm_loadu_si128(reinterpret_cast<const __m128i*>(p));
      newlines = static_cast<uint32_t>(_mm_movemask_epi8(_mm_cmpeq_epi8(raw, newline)));
    } else {  // the run's last bytes: copied out, the lanes past `end` no newline
      alignas(16) unsigned char tail[kChunk] = {};
      const auto available = static_cast<size_t>(end - p);
      std::memcpy(tail, p, available);
      raw = _mm_load_si128(reinterpret_cast<const __m128i*>(tail));
      newlines = static_cast<uint32_t>(_mm_movemask_epi8(_mm_cmpeq_epi8(raw, newline))) &
                 ((uint32_t{1} << available) - 1);
    }
    if (chunk == kMaxChunks) {  // too long to memoize: only its length is wanted
      const void* found = newlines != 0 ? p + __builtin_ctz(newlines)
                                        : std::memchr(p, '\n', static_cast<size_t>(end - p));
      if (found == nullptr) return false;
      length = static_cast<size_t>(static_cast<const char*>(found) - line);
      fits = false;
      return true;
    }
    if (newlines != 0) {
      const auto in_chunk = static_cast<size_t>(__builtin_ctz(newlines));
      raw = _mm_and_si128(
          raw, _mm_loadu_si128(reinterpret_cast<const __m128i*>(kKeep + kChunk - in_chunk)));
    }
    const __m128i masked = kMaskDigits ? digit_mask::Mask(raw) : raw;
    _mm_store_si128(reinterpret_cast<__m128i*>(text + i), masked);
    // xxh3-style: the 32x32-bit product of each 64-bit lane's keyed halves, plus the lane
    // itself (swapped) so that no input bit is lost when a half is zero.
    const __m128i keyed = _mm_xor_si128(masked, _mm_load_si128(reinterpret_cast<const __m128i*>(
                                                    line_scan::kKeys.data() + 2 * (chunk % 16))));
    acc =
        _mm_add_epi64(acc, _mm_mul_epu32(keyed, _mm_shuffle_epi32(keyed, _MM_SHUFFLE(2, 3, 0, 1))));
    acc = _mm_add_epi64(acc, _mm_shuffle_epi32(masked, _MM_SHUFFLE(1, 0, 3, 2)));
    if (newlines != 0) {
      length = i + static_cast<size_t>(__builtin_ctz(newlines));
      fits = length <= kMaxLength;
      const auto low = static_cast<uint64_t>(_mm_cvtsi128_si64(acc));
      const auto high = static_cast<uint64_t>(_mm_cvtsi128_si64(_mm_unpackhi_epi64(acc, acc)));
      hash = line_scan::Finish(low ^ (high << 29 | high >> 35), length);
      return true;
    }
  }
}
#else
template <bool kMaskDigits>
__attribute__((always_inline)) inline bool LineScan::Read(const char* line, const char* end) {
  const void* found = std::memchr(line, '\n', static_cast<size_t>(end - line));
  if (found == nullptr) return false;
  length = static_cast<size_t>(static_cast<const char*>(found) - line);
  fits = length <= kMaxLength;
  if (!fits) return true;
  std::memset(text, 0, chunks() * kChunk);
  for (size_t i = 0; i < length; ++i) {
    const char c = line[i];
    text[i] = static_cast<unsigned char>(kMaskDigits ? digit_mask::MaskChar(c) : c);
  }
  uint64_t h = 0;
  for (size_t i = 0; i < chunks() * kChunk; i += 8) {
    uint64_t word;
    std::memcpy(&word, text + i, 8);
    h = (h ^ word ^ line_scan::kKeys[(i / 8) % 32]) * 0xBF58476D1CE4E5B9ull;
    h ^= h >> 31;
  }
  hash = line_scan::Finish(h, length);
  return true;
}
#endif

}  // namespace codedrift
