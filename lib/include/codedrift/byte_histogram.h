// Byte histograms at memory speed: the fast path of the `bytes` symbolizer for whole buffers
// (CLI captures, received socket buffers), where producing one id per byte would cost more
// than the counting itself.
#pragma once

#include <cstdint>
#include <string_view>

namespace codedrift {

// Adds the count of every byte value in `data` to `histogram` (it is not cleared first).
// Single-threaded; touches nothing but its arguments.
void CountBytes(std::string_view data, uint64_t (&histogram)[256]);

// Same result as CountBytes, with the input split across up to `threads` threads (<= 0: one
// per hardware thread). Small inputs, where starting threads costs more than counting, run on
// the calling thread. Blocks until done.
void CountBytesParallel(std::string_view data, uint64_t (&histogram)[256], int threads);

}  // namespace codedrift
