#include "codedrift/byte_histogram.h"

#include <algorithm>
#include <array>
#include <cstring>
#include <system_error>
#include <thread>
#include <vector>

namespace codedrift {
namespace {

// One table per byte lane: consecutive equal bytes (runs of spaces, zero padding) would
// otherwise serialise on a store-to-load dependency through the same counter.
constexpr int kLanes = 4;

// Bytes counted into the 32-bit lane tables before they are flushed into the 64-bit
// histogram: each lane sees a quarter of them, far below 2^32.
constexpr size_t kFlushBytes = size_t{1} << 30;

// Below this, the lane tables cost more than they save.
constexpr size_t kMinLaneBytes = 2048;

// Below this, starting a thread costs more than counting on the calling thread.
constexpr size_t kMinBytesPerThread = size_t{1} << 20;

void CountChunk(const unsigned char* p, size_t n, uint32_t (&lanes)[kLanes][256]) {
  const unsigned char* const end = p + n;
  while (end - p >= 16) {
    uint64_t a;
    uint64_t b;
    std::memcpy(&a, p, 8);
    std::memcpy(&b, p + 8, 8);
    p += 16;
    for (int i = 0; i < 8; i += 4) {
      ++lanes[0][(a >> (8 * i)) & 0xff];
      ++lanes[1][(a >> (8 * i + 8)) & 0xff];
      ++lanes[2][(a >> (8 * i + 16)) & 0xff];
      ++lanes[3][(a >> (8 * i + 24)) & 0xff];
      ++lanes[0][(b >> (8 * i)) & 0xff];
      ++lanes[1][(b >> (8 * i + 8)) & 0xff];
      ++lanes[2][(b >> (8 * i + 16)) & 0xff];
      ++lanes[3][(b >> (8 * i + 24)) & 0xff];
    }
  }
  while (p != end) ++lanes[0][*p++];
}

}  // namespace

void CountBytes(std::string_view data, uint64_t (&histogram)[256]) {
  const auto* p = reinterpret_cast<const unsigned char*>(data.data());
  // Short records (most telemetry lines): zeroing and folding 4 KiB of lane tables would
  // cost more than counting straight into the histogram.
  if (data.size() < kMinLaneBytes) {
    for (unsigned char c : data) ++histogram[c];
    return;
  }
  size_t remaining = data.size();
  while (remaining > 0) {
    uint32_t lanes[kLanes][256] = {};
    const size_t n = std::min(remaining, kFlushBytes);
    CountChunk(p, n, lanes);
    for (int s = 0; s < 256; ++s) {
      histogram[s] += uint64_t{lanes[0][s]} + lanes[1][s] + lanes[2][s] + lanes[3][s];
    }
    p += n;
    remaining -= n;
  }
}

void CountBytesParallel(std::string_view data, uint64_t (&histogram)[256], int threads) {
  if (threads <= 0) threads = static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
  const size_t useful = std::max<size_t>(1, data.size() / kMinBytesPerThread);
  const size_t parts = std::min(static_cast<size_t>(threads), useful);
  if (parts <= 1) {
    CountBytes(data, histogram);
    return;
  }
  // Each thread counts a contiguous slice into its own histogram (no sharing, no false
  // sharing of counters); the calling thread takes the last slice and then sums.
  std::vector<std::array<uint64_t, 256>> partial(parts - 1);
  std::vector<std::thread> workers;
  workers.reserve(parts - 1);
  const size_t slice = data.size() / parts;
  for (size_t t = 0; t + 1 < parts; ++t) {
    auto count_slice = [&, t] {
      uint64_t local[256] = {};
      CountBytes(data.substr(t * slice, slice), local);
      std::copy(std::begin(local), std::end(local), partial[t].begin());
    };
    try {
      workers.emplace_back(count_slice);
    } catch (const std::system_error&) {
      count_slice();  // no thread available: the answer must not depend on it
    }
  }
  CountBytes(data.substr((parts - 1) * slice), histogram);
  for (auto& worker : workers) worker.join();
  for (const auto& counts : partial) {
    for (int s = 0; s < 256; ++s) histogram[s] += counts[static_cast<size_t>(s)];
  }
}

}  // namespace codedrift
