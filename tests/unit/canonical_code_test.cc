#include "codedrift/canonical_code.h"

#include <array>
#include <string>
#include <vector>

#include <gtest/gtest.h>

namespace codedrift {
namespace {

std::vector<std::string> CodeStrings(const std::vector<Codeword>& codewords) {
  std::vector<std::string> out;
  for (const Codeword& codeword : codewords) out.push_back(codeword.ToString());
  return out;
}

// bl_count[len]: how many codewords have each length (RFC 1951 section 3.2.2, step 1).
std::array<int, kMaxCodeLength + 1> CountLengths(const std::vector<Codeword>& codewords) {
  std::array<int, kMaxCodeLength + 1> counts{};
  for (const Codeword& codeword : codewords) {
    if (codeword.length > 0) ++counts[codeword.length];
  }
  return counts;
}

// next_code[len]: the first (smallest) codeword of each length (RFC 1951 section 3.2.2, step 2).
uint32_t FirstCode(const std::vector<Codeword>& codewords, int length) {
  uint32_t first = UINT32_MAX;
  for (const Codeword& codeword : codewords) {
    if (codeword.length == length && codeword.bits < first) first = codeword.bits;
  }
  return first;
}

// The RFC 1951 section 3.2.6 fixed literal/length code lengths.
std::vector<int> FixedLiteralLengths() {
  std::vector<int> lengths(288);
  for (int symbol = 0; symbol < 288; ++symbol) {
    lengths[symbol] = symbol <= 143 ? 8 : symbol <= 255 ? 9 : symbol <= 279 ? 7 : 8;
  }
  return lengths;
}

TEST(CanonicalCode, SmallExampleOfRfc1951) {
  // RFC 1951 section 3.2.2: lengths A=2, B=1, C=3, D=3 give A=10, B=0, C=110, D=111.
  const std::vector<int> lengths = {2, 1, 3, 3};
  EXPECT_EQ(CodeStrings(CanonicalCodewords(lengths)),
            (std::vector<std::string>{"10", "0", "110", "111"}));
  // RFC 1951 section 3.2.2: this code is complete (Kraft sum 1).
  EXPECT_TRUE(ComputeKraftSum(lengths).complete());
}

TEST(CanonicalCode, WorkedExampleOfRfc1951) {
  // RFC 1951 section 3.2.2: A..H with lengths (3,3,3,3,3,2,4,4).
  const std::vector<int> lengths = {3, 3, 3, 3, 3, 2, 4, 4};
  const std::vector<Codeword> codewords = CanonicalCodewords(lengths);
  const auto bl_count = CountLengths(codewords);
  EXPECT_EQ(bl_count[2], 1);  // RFC 1951 section 3.2.2: bl_count[2]=1, [3]=5, [4]=2
  EXPECT_EQ(bl_count[3], 5);
  EXPECT_EQ(bl_count[4], 2);
  EXPECT_EQ(FirstCode(codewords, 2), 0u);   // RFC 1951 section 3.2.2: next_code[2]=0
  EXPECT_EQ(FirstCode(codewords, 3), 2u);   // next_code[3]=2
  EXPECT_EQ(FirstCode(codewords, 4), 14u);  // next_code[4]=14
  // RFC 1951 section 3.2.2: A=010 B=011 C=100 D=101 E=110 F=00 G=1110 H=1111.
  EXPECT_EQ(CodeStrings(codewords),
            (std::vector<std::string>{"010", "011", "100", "101", "110", "00", "1110", "1111"}));
  EXPECT_TRUE(ComputeKraftSum(lengths).complete());
}

TEST(CanonicalCode, FixedLiteralLengthCodeOfRfc1951) {
  const std::vector<int> lengths = FixedLiteralLengths();
  const std::vector<Codeword> codewords = CanonicalCodewords(lengths);
  const auto bl_count = CountLengths(codewords);
  // RFC 1951 section 3.2.6: bl_count[7]=24, [8]=152, [9]=112.
  EXPECT_EQ(bl_count[7], 24);
  EXPECT_EQ(bl_count[8], 152);
  EXPECT_EQ(bl_count[9], 112);
  // RFC 1951 section 3.2.6: the codeword ranges, checked at their boundaries.
  EXPECT_EQ(codewords[0].ToString(), "00110000");
  EXPECT_EQ(codewords[143].ToString(), "10111111");
  EXPECT_EQ(codewords[144].ToString(), "110010000");
  EXPECT_EQ(codewords[255].ToString(), "111111111");
  EXPECT_EQ(codewords[256].ToString(), "0000000");
  EXPECT_EQ(codewords[279].ToString(), "0010111");
  EXPECT_EQ(codewords[280].ToString(), "11000000");
  EXPECT_EQ(codewords[287].ToString(), "11000111");
  // RFC 1951 section 3.2.6 (REFERENCES.md): the fixed code is complete, Kraft sum exactly 1.
  const KraftSum kraft = ComputeKraftSum(lengths);
  EXPECT_TRUE(kraft.complete());
  EXPECT_FALSE(kraft.over());
  EXPECT_EQ(kraft.value(), 1.0);
}

TEST(CanonicalCode, FixedDistanceCodeOfRfc1951) {
  // RFC 1951 section 3.2.6: distance codes 0-31 are fixed 5-bit codes, the code's value.
  const std::vector<int> lengths(32, 5);
  const std::vector<Codeword> codewords = CanonicalCodewords(lengths);
  for (uint32_t symbol = 0; symbol < 32; ++symbol) {
    EXPECT_EQ(codewords[symbol].bits, symbol);
    EXPECT_EQ(codewords[symbol].length, 5);
  }
  EXPECT_EQ(codewords[31].ToString(), "11111");
  EXPECT_TRUE(ComputeKraftSum(lengths).complete());  // RFC 1951 section 3.2.6: 32 x 2^-5 = 1
}

TEST(CanonicalCode, KraftOverOneIsDetectedExactly) {
  // Kraft-McMillan (Kraft 1949; McMillan 1956): no prefix code has a sum above 1. These sums
  // differ from 1 by 2^-32, the finest step at 32-bit lengths; the exact sum must see it.
  std::vector<int> lengths = {1};
  for (int length = 2; length <= 32; ++length) lengths.push_back(length);  // 1 - 2^-32
  EXPECT_FALSE(ComputeKraftSum(lengths).complete());
  EXPECT_FALSE(ComputeKraftSum(lengths).over());
  EXPECT_EQ(ComputeKraftSum(lengths).numerator, (KraftNumerator{1} << 32) - 1);
  lengths.push_back(32);  // exactly 1
  EXPECT_TRUE(ComputeKraftSum(lengths).complete());
  lengths.push_back(32);  // 1 + 2^-32
  EXPECT_TRUE(ComputeKraftSum(lengths).over());
  EXPECT_FALSE(ComputeKraftSum(lengths).complete());
  // Three one-bit codewords: 3/2.
  EXPECT_TRUE(ComputeKraftSum(std::vector<int>{1, 1, 1}).over());
  EXPECT_EQ(ComputeKraftSum(std::vector<int>{1, 1, 1}).value(), 1.5);
}

TEST(CanonicalCode, CompleteCodeIsDetectedExactly) {
  // 2^32 codewords of 32 bits would be 1 exactly; use the same sum from mixed lengths instead:
  // 1/2 + 1/4 + ... + 2^-31 + 2 x 2^-32 = 1 (the geometric series).
  std::vector<int> lengths;
  for (int length = 1; length <= 32; ++length) lengths.push_back(length);
  lengths.push_back(32);
  const KraftSum kraft = ComputeKraftSum(lengths);
  EXPECT_TRUE(kraft.complete());
  EXPECT_FALSE(kraft.over());
  // Canonical codes of that code: 0, 10, 110, ..., then the two 32-bit codes 1...10 and 1...11.
  const std::vector<Codeword> codewords = CanonicalCodewords(lengths);
  EXPECT_EQ(codewords[0].ToString(), "0");
  EXPECT_EQ(codewords[2].ToString(), "110");
  EXPECT_EQ(codewords[31].bits, 0xFFFFFFFEu);
  EXPECT_EQ(codewords[32].bits, 0xFFFFFFFFu);
  // Incomplete codes are neither complete nor over.
  const KraftSum half = ComputeKraftSum(std::vector<int>{1, 0, 0});
  EXPECT_FALSE(half.complete());
  EXPECT_FALSE(half.over());
  EXPECT_EQ(half.value(), 0.5);
}

TEST(CanonicalCode, ZeroLengthsHaveNoCodeword) {
  // RFC 1951 section 3.2.2, step 3 (from memory): codes with a bit length of zero are never
  // used and must not be assigned a value.
  const std::vector<Codeword> codewords = CanonicalCodewords(std::vector<int>{0, 1, 0, 1});
  EXPECT_EQ(codewords[0].length, 0);
  EXPECT_EQ(codewords[0].ToString(), "");
  EXPECT_EQ(codewords[1].ToString(), "0");
  EXPECT_EQ(codewords[3].ToString(), "1");
}

TEST(CanonicalCode, CanonicalCodesArePrefixFree) {
  // Kraft 1949: lengths meeting the inequality are realisable as a prefix code; the canonical
  // construction must realise them. Checked pairwise over every Kraft-valid length vector of
  // five symbols with lengths 1..4.
  std::vector<int> lengths(5, 1);
  int checked = 0;
  for (int index = 0; index < 4 * 4 * 4 * 4 * 4; ++index) {
    for (int i = 0, rest = index; i < 5; ++i, rest /= 4) lengths[i] = 1 + rest % 4;
    if (ComputeKraftSum(lengths).over()) continue;
    ++checked;
    const std::vector<std::string> codes = CodeStrings(CanonicalCodewords(lengths));
    for (size_t a = 0; a < codes.size(); ++a) {
      ASSERT_EQ(static_cast<int>(codes[a].size()), lengths[a]);
      for (size_t b = 0; b < codes.size(); ++b) {
        if (a == b) continue;
        ASSERT_NE(codes[b].rfind(codes[a], 0), 0u) << codes[a] << " is a prefix of " << codes[b];
      }
    }
  }
  EXPECT_GT(checked, 0);
}

}  // namespace
}  // namespace codedrift
