// The bytes fast path: one parallel pass that counts non-overlapping byte pairs (order-2
// blocks from the stream's start) and derives the single-byte histogram from them, so the
// default `inspect` gets orders 1 and 2 for less than the cost of a plain byte histogram.
#pragma once

#include <cstdint>
#include <vector>

#include "codedrift/result.h"

#include "capture_reader.h"
#include "progress.h"

namespace codedrift::cli {

// Histograms of one stream. Plain value type.
struct BytePairCounts {
  uint64_t bytes = 0;
  std::vector<uint64_t> singles;        // 256 entries, every byte of the stream
  std::vector<uint64_t> pairs;          // 65536 entries, index (first << 8) | second
  std::vector<uint64_t> older_singles;  // bytes of the first half (offsets < older_bytes)
  uint64_t older_bytes = 0;             // the first half's length, even
};

// Reads the stream in two halves (128 KiB positioned reads each), on two threads when
// `parallel` and a second thread can be had. `progress` may be null.
Result<BytePairCounts> CountBytePairs(const CaptureStream& stream, bool parallel,
                                      Progress* progress);

// The counting kernel, exposed for benchmarks and tests: adds the pairs of `data` (its length
// must be even) to `table`, indexed by the pair's two bytes read as a little-endian 16-bit
// value (second << 8 | first). Two tables alternate so that runs of one pair do not serialise.
void CountPairsLittleEndian(const unsigned char* data, size_t length, uint32_t* table_a,
                            uint32_t* table_b);

}  // namespace codedrift::cli
