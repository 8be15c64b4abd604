// Shared by the framer fuzz targets: the chunk sizes a stream is cut into, taken off the fuzz
// input, and the cutting itself, so every framer is fed the same way.
#pragma once

#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <string_view>
#include <vector>

#include "fuzz_check.h"

namespace codedrift::fuzz {

// Up to 7 chunk sizes of 0..79 bytes each (0 means: the rest at once), read off `reader`.
inline std::vector<size_t> TakeChunkSizes(FuzzReader& reader) {
  std::vector<size_t> sizes;
  const uint8_t chunk_count = reader.Byte() % 8;
  for (uint8_t i = 0; i < chunk_count; ++i) sizes.push_back(reader.Byte() % 80);
  return sizes;
}

// Calls feed(chunk) on consecutive chunks of `data` whose sizes cycle through `sizes` (0, or
// no sizes at all, means: the rest at once).
template <typename Feed>
void ForEachChunk(std::string_view data, const std::vector<size_t>& sizes, Feed feed) {
  size_t pos = 0;
  for (size_t i = 0; pos < data.size(); ++i) {
    const size_t want = sizes.empty() ? 0 : sizes[i % sizes.size()];
    const size_t take = want == 0 ? data.size() - pos : std::min(want, data.size() - pos);
    feed(data.substr(pos, take));
    pos += take;
  }
}

}  // namespace codedrift::fuzz
