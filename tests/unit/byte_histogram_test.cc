#include "codedrift/byte_histogram.h"

#include <cstdint>
#include <random>
#include <string>
#include <vector>

#include <gtest/gtest.h>

namespace codedrift {
namespace {

// Invented seeded data: uniform bytes, then long runs of one value (the case interleaved
// tables exist for) so that every lane and the tail path see traffic.
std::string RandomBytes(size_t n, uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::string data(n, '\0');
  for (size_t i = 0; i < n; ++i) data[i] = static_cast<char>(rng() & 0xff);
  for (size_t i = n / 2; i < n && i < n / 2 + 4096; ++i) data[i] = ' ';
  return data;
}

std::vector<uint64_t> NaiveCount(const std::string& data) {
  std::vector<uint64_t> counts(256, 0);
  for (unsigned char c : data) ++counts[c];
  return counts;
}

std::vector<uint64_t> AsVector(const uint64_t (&histogram)[256]) {
  return std::vector<uint64_t>(std::begin(histogram), std::end(histogram));
}

TEST(CountBytes, MatchesNaiveCountOnOddLengths) {
  for (size_t n : {size_t{0}, size_t{1}, size_t{3}, size_t{15}, size_t{17}, size_t{1'000'007}}) {
    const std::string data = RandomBytes(n, 1000 + n);
    uint64_t histogram[256] = {};
    CountBytes(data, histogram);
    EXPECT_EQ(AsVector(histogram), NaiveCount(data)) << "length " << n;
  }
}

TEST(CountBytes, AddsToTheHistogramInsteadOfClearingIt) {
  const std::string data = "hello";
  uint64_t histogram[256] = {};
  histogram[static_cast<unsigned char>('l')] = 40;
  CountBytes(data, histogram);
  EXPECT_EQ(histogram[static_cast<unsigned char>('l')], 42u);
  EXPECT_EQ(histogram[static_cast<unsigned char>('h')], 1u);
}

TEST(CountBytes, SingleValueRunsCountEveryByte) {
  // One value only: every increment hits the same counter in each lane.
  const std::string data(1'000'003, '\0');
  uint64_t histogram[256] = {};
  CountBytes(data, histogram);
  EXPECT_EQ(histogram[0], 1'000'003u);
  EXPECT_EQ(histogram[1], 0u);
}

TEST(CountBytesParallel, MatchesSingleThreadedCount) {
  // Large enough to split (several MiB), odd so slices have uneven ends.
  const std::string data = RandomBytes((size_t{5} << 20) + 7, 99);
  const std::vector<uint64_t> expected = NaiveCount(data);
  for (int threads : {0, 1, 2, 3, 8}) {
    uint64_t histogram[256] = {};
    CountBytesParallel(data, histogram, threads);
    EXPECT_EQ(AsVector(histogram), expected) << threads << " threads";
  }
  // Small inputs take the single-threaded path and must still be exact.
  for (size_t n : {size_t{0}, size_t{1}, size_t{3}}) {
    const std::string small = RandomBytes(n, n);
    uint64_t histogram[256] = {};
    CountBytesParallel(small, histogram, 2);
    EXPECT_EQ(AsVector(histogram), NaiveCount(small)) << "length " << n;
  }
}

}  // namespace
}  // namespace codedrift
