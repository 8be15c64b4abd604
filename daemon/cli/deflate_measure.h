// A practical yardstick for `inspect`: what zlib's deflate (level 6, raw stream) spends per
// byte of the capture. zlib manages tens of MB/s, so large captures are sampled.
#pragma once

#include <cstdint>

#include "codedrift/result.h"

#include "capture_reader.h"

namespace codedrift::cli {

inline constexpr uint64_t kDeflateSampleBlockBytes = uint64_t{1} << 20;
inline constexpr uint64_t kDefaultDeflateBudgetBytes = uint64_t{32} << 20;

struct DeflateMeasure {
  uint64_t sampled_bytes = 0;     // bytes given to zlib
  uint64_t compressed_bytes = 0;  // bytes zlib produced for them
  double BitsPerByte() const;     // 8 * compressed / sampled (0 when nothing was sampled)
};

// Streams of at most `budget_bytes` are compressed whole, as one raw deflate stream (level 6,
// windowBits -15). Longer ones: floor(budget / 1 MiB) evenly spaced 1 MiB blocks (the first
// at the start, the last at the end), each compressed as its own raw stream. A budget below
// 1 MiB on a longer stream compresses nothing. The samples of a longer stream are compressed on
// up to `threads` threads (the figures do not depend on it); a whole stream is one zlib stream
// and takes one thread. Blocks until done.
Result<DeflateMeasure> MeasureDeflate(const CaptureStream& stream, uint64_t budget_bytes,
                                      int threads = 1);

}  // namespace codedrift::cli
