// ByteSelection counts exactly the selected bytes, on the vector path (AVX2, where the CPU has
// it) and the portable one, against a naive count. Invented seeded data and selections.
#include "codedrift/byte_selection.h"

#include <bitset>
#include <cstdint>
#include <random>
#include <string>
#include <vector>

#include <gtest/gtest.h>

namespace codedrift {
namespace {

std::string RandomBytes(size_t n, std::mt19937_64& rng) {
  std::string data(n, '\0');
  for (char& c : data) c = static_cast<char>(rng() & 0xff);
  return data;
}

// Text-like data: mostly a few letters, with rare bytes from the whole range.
std::string MostlyText(size_t n, std::mt19937_64& rng) {
  std::string data(n, '\0');
  for (char& c : data) {
    c = rng() % 64 == 0 ? static_cast<char>(rng() & 0xff) : "etaoin \n"[rng() % 8];
  }
  return data;
}

std::vector<uint64_t> NaiveCount(const std::string& data, const std::bitset<256>& selected) {
  std::vector<uint64_t> counts(256, 0);
  for (unsigned char c : data) {
    if (selected[c]) ++counts[c];
  }
  return counts;
}

std::vector<std::bitset<256>> Selections(std::mt19937_64& rng) {
  std::bitset<256> none;
  std::bitset<256> all;
  all.set();
  std::bitset<256> high_half;  // bytes >= 0x80: the rows for high nibbles 8..15
  for (int b = 128; b < 256; ++b) high_half.set(static_cast<size_t>(b));
  std::bitset<256> one_per_row;  // one byte per high nibble, every low nibble used once
  for (int h = 0; h < 16; ++h) one_per_row.set(static_cast<size_t>(h * 16 + (h * 7) % 16));
  std::vector<std::bitset<256>> out = {none, all, high_half, one_per_row, ~high_half};
  for (int density : {1, 8, 128, 250}) {
    std::bitset<256> random;
    for (size_t b = 0; b < 256; ++b) random[b] = static_cast<int>(rng() % 256) < density;
    out.push_back(random);
  }
  for (int b : {0, 0x0a, 0x7f, 0x80, 0xff}) {
    std::bitset<256> single;
    single.set(static_cast<size_t>(b));
    out.push_back(single);
  }
  return out;
}

TEST(ByteSelection, BothPathsCountExactlyTheSelectedBytes) {
  std::mt19937_64 rng(20261202);
  const auto selections = Selections(rng);
  for (size_t n : {size_t{0}, size_t{1}, size_t{31}, size_t{63}, size_t{64}, size_t{65},
                   size_t{1000}, size_t{4096}, size_t{9000}, size_t{65536 + 17}}) {
    // Text then random bytes and the reverse: the first 4 KiB decide whether the rest is
    // counted selected byte by selected byte or whole, and either way must stay exact.
    for (const std::string& data :
         {RandomBytes(n, rng), MostlyText(n, rng), MostlyText(n / 2, rng) + RandomBytes(n / 2, rng),
          RandomBytes(n / 2, rng) + MostlyText(n / 2, rng)}) {
      for (size_t s = 0; s < selections.size(); ++s) {
        const ByteSelection selection(selections[s]);
        const auto expected = NaiveCount(data, selections[s]);
        uint64_t fast[256] = {};
        uint64_t portable[256] = {};
        selection.Count(data, fast);
        selection.CountPortable(data, portable);
        EXPECT_EQ(std::vector<uint64_t>(std::begin(fast), std::end(fast)), expected)
            << "length " << n << ", selection " << s;
        EXPECT_EQ(std::vector<uint64_t>(std::begin(portable), std::end(portable)), expected)
            << "length " << n << ", selection " << s;
      }
    }
  }
}

TEST(ByteSelection, AddsToTheHistogramAndLeavesUnselectedEntriesAlone) {
  std::bitset<256> digits;
  for (char c = '0'; c <= '9'; ++c) digits.set(static_cast<unsigned char>(c));
  const ByteSelection selection(digits);
  uint64_t histogram[256];
  for (uint64_t& count : histogram) count = 5;
  const std::string data = std::string(100, '7') + std::string(100, 'x') + "0";
  selection.Count(data, histogram);
  EXPECT_EQ(histogram[static_cast<unsigned char>('7')], 105u);
  EXPECT_EQ(histogram[static_cast<unsigned char>('0')], 6u);
  EXPECT_EQ(histogram[static_cast<unsigned char>('x')], 5u);  // not selected: untouched
}

TEST(ByteSelection, DefaultSelectsEveryByte) {
  const ByteSelection every;
  EXPECT_TRUE(every.all());
  EXPECT_FALSE(every.none());
  EXPECT_TRUE(ByteSelection(std::bitset<256>()).none());
}

}  // namespace
}  // namespace codedrift
