#include "codedrift/delimiter_set.h"

#include <random>
#include <string>
#include <utility>
#include <vector>

#include <gtest/gtest.h>

namespace codedrift {
namespace {

// The plain definition the vector scan must reproduce: one table lookup per byte.
struct ByteLoop {
  explicit ByteLoop(const std::string& delimiters) {
    for (const char c : delimiters) is_delimiter[static_cast<unsigned char>(c)] = true;
  }
  uint64_t Mask(const char* p, size_t n) const {
    uint64_t mask = 0;
    for (size_t i = 0; i < n; ++i) {
      if (is_delimiter[static_cast<unsigned char>(p[i])]) mask |= uint64_t{1} << i;
    }
    return mask;
  }
  std::vector<std::string> Tokens(const std::string& text) const {
    std::vector<std::string> out;
    size_t i = 0;
    while (i < text.size()) {
      while (i < text.size() && is_delimiter[static_cast<unsigned char>(text[i])]) ++i;
      if (i == text.size()) break;
      const size_t start = i;
      while (i < text.size() && !is_delimiter[static_cast<unsigned char>(text[i])]) ++i;
      out.push_back(text.substr(start, i - start));
    }
    return out;
  }
  bool is_delimiter[256] = {};
};

std::vector<std::string> ScanTokens(const DelimiterSet& set, const std::string& text) {
  std::vector<std::string> out;
  set.ForEachToken(text,
                   [&](const char* token, size_t length) { out.emplace_back(token, length); });
  return out;
}

// Delimiter sets of every size class: the 4-compare and 8-compare vector paths, the byte-table
// path (more than 8 distinct bytes), and sets holding NUL, 0x80 and 0xff.
std::vector<std::string> DelimiterSets(std::mt19937_64& rng) {
  std::vector<std::string> sets = {
      " =,\n",      std::string(" \n\0", 3), "\n", "\x80\xff", " =,;:|\t\n",
      "abcdefghij", std::string(1, '\0')};
  for (int i = 0; i < 24; ++i) {
    std::string set;
    const size_t size = 1 + rng() % 12;
    for (size_t k = 0; k < size; ++k) set += static_cast<char>(rng() % 256);
    sets.push_back(set);
  }
  return sets;
}

// Text whose bytes come half from the delimiter set and half from all 256 byte values, so
// both long runs and single-byte tokens occur.
std::string RandomText(std::mt19937_64& rng, const std::string& delimiters, size_t size) {
  std::string text;
  for (size_t i = 0; i < size; ++i) {
    text += rng() % 2 == 0 ? delimiters[rng() % delimiters.size()] : static_cast<char>(rng() % 256);
  }
  return text;
}

TEST(DelimiterSetProperty, VectorMaskEqualsByteLoopAtEveryLengthAndAlignment) {
  // Property (invented seeded data): for every delimiter set, every start offset 0..15 into
  // a buffer (so every alignment), every length 0..64 and every record start before it, the
  // mask equals the byte loop's.
  std::mt19937_64 rng(20261202);
  for (const std::string& delimiters : DelimiterSets(rng)) {
    const DelimiterSet set(delimiters);
    const ByteLoop reference(delimiters);
    for (int round = 0; round < 8; ++round) {
      const std::string buffer = RandomText(rng, delimiters, 96);
      for (size_t offset = 0; offset < 16; ++offset) {
        for (size_t n = 0; offset + n <= 80 && n <= 64; ++n) {
          const char* p = buffer.data() + offset;
          for (const char* begin : {p, buffer.data()}) {
            ASSERT_EQ(set.Mask(begin, p, n), reference.Mask(p, n))
                << "set size " << delimiters.size() << " offset " << offset << " n " << n;
          }
        }
      }
    }
  }
}

TEST(DelimiterSetProperty, EveryByteValueIsTestedAgainstTheSet) {
  // Property: each of the 256 byte values, at each of the 64 positions of a scan, is reported
  // a delimiter exactly when the set holds it.
  std::mt19937_64 rng(7);
  for (const std::string& delimiters : DelimiterSets(rng)) {
    const DelimiterSet set(delimiters);
    const ByteLoop reference(delimiters);
    for (int value = 0; value < 256; ++value) {
      std::string text(64, static_cast<char>(value));
      ASSERT_EQ(set.Mask(text.data(), text.data(), 64), reference.Mask(text.data(), 64));
      for (size_t position = 0; position < 64; ++position) {
        std::string one(64, static_cast<char>(value ^ 1));
        one[position] = static_cast<char>(value);
        ASSERT_EQ(set.Mask(one.data(), one.data(), 64), reference.Mask(one.data(), 64))
            << "value " << value << " position " << position;
      }
      EXPECT_EQ(set.Contains(static_cast<unsigned char>(value)), reference.is_delimiter[value]);
    }
  }
}

TEST(DelimiterSetProperty, TokensEqualTheByteLoopSplit) {
  // Property: tokens of random texts of every length 0..300 (tokens crossing the 64-byte
  // scan steps, texts starting and ending inside tokens or delimiters) equal the byte loop's.
  std::mt19937_64 rng(424242);
  for (const std::string& delimiters : DelimiterSets(rng)) {
    const DelimiterSet set(delimiters);
    const ByteLoop reference(delimiters);
    for (size_t size = 0; size <= 300; ++size) {
      // Mostly non-delimiters, so tokens grow long enough to cross 64-byte steps.
      std::string text;
      for (size_t i = 0; i < size; ++i) {
        text +=
            rng() % 9 == 0 ? delimiters[rng() % delimiters.size()] : static_cast<char>(rng() % 256);
      }
      ASSERT_EQ(ScanTokens(set, text), reference.Tokens(text)) << "size " << size;
    }
  }
}

TEST(DelimiterSet, SplitsOnEachDelimiterAndSkipsRuns) {
  const DelimiterSet set(" =,");
  EXPECT_EQ(ScanTokens(set, "temp=14.2 node=a,,temp=15"),
            (std::vector<std::string>{"temp", "14.2", "node", "a", "temp", "15"}));
  EXPECT_EQ(ScanTokens(set, ""), std::vector<std::string>{});
  EXPECT_EQ(ScanTokens(set, " ,= "), std::vector<std::string>{});
  const std::string long_token(200, 'x');
  EXPECT_EQ(ScanTokens(set, " " + long_token + " y"), (std::vector<std::string>{long_token, "y"}));
}

TEST(DelimiterSet, EmptySetMakesTheWholeTextOneToken) {
  const DelimiterSet set("");
  const std::string text = std::string("a\0b c", 5);
  EXPECT_EQ(ScanTokens(set, text), std::vector<std::string>{text});
  EXPECT_EQ(set.Mask(text.data(), text.data(), text.size()), 0u);
}

}  // namespace
}  // namespace codedrift
