#include "codedrift/alphabet.h"

#include <gtest/gtest.h>

#include "codedrift/symbol_counts.h"

namespace codedrift {
namespace {

TEST(Alphabet, ParsesAndPrintsEveryKind) {
  for (const char* text : {"bytes", "bytes:2", "tokens", "field:12"}) {
    auto alphabet = Alphabet::Parse(text);
    ASSERT_TRUE(alphabet.ok()) << text;
    EXPECT_EQ(alphabet.value().ToString(), text);
  }
  EXPECT_FALSE(Alphabet::Parse("field:33").ok());
  EXPECT_FALSE(Alphabet::Parse("bytes:0").ok());
  EXPECT_FALSE(Alphabet::Parse("nibbles").ok());
}

TEST(Alphabet, KeysRoundTrip) {
  const Alphabet bytes = Alphabet::Bytes();
  auto key = bytes.ParseKey("0x41");
  ASSERT_TRUE(key.ok());
  EXPECT_EQ(key.value(), "A");
  EXPECT_EQ(bytes.FormatKey("\n"), "0x0a");
  EXPECT_FALSE(bytes.ParseKey("0x4").ok());
  EXPECT_FALSE(bytes.ParseKey("0x4g").ok());
  EXPECT_FALSE(bytes.ParseKey("65").ok());

  const Alphabet pairs = Alphabet::Bytes(2);
  ASSERT_TRUE(pairs.ParseKey("0x4142").ok());
  EXPECT_EQ(pairs.ParseKey("0x4142").value(), "AB");
  EXPECT_FALSE(pairs.ParseKey("0x41").ok());

  const Alphabet field = Alphabet::Field(12);
  ASSERT_TRUE(field.ParseKey("4095").ok());
  EXPECT_EQ(field.FormatKey(field.ParseKey("4095").value()), "4095");
  EXPECT_FALSE(field.ParseKey("4096").ok());
}

TEST(Alphabet, LiteralCostFollowsTheDesignRule) {
  EXPECT_EQ(Alphabet::Bytes().LiteralBits("A", 8), 8);
  EXPECT_EQ(Alphabet::Tokens().LiteralBits("temp", 8), 40);  // (4 + 1) * 8
  EXPECT_EQ(Alphabet::Field(12).LiteralBits(FieldKey(7), 12), 12);
}

TEST(SymbolCounts, MergeAndRemoveAreInverse) {
  SymbolCounts a(Alphabet::Bytes());
  SymbolCounts b(Alphabet::Bytes());
  a.Add("x", 3);
  a.Add("y", 1);
  b.Add("x", 2);
  b.Add("z", 5);
  SymbolCounts sum = a;
  sum.Merge(b);
  EXPECT_EQ(sum.total(), 11u);
  EXPECT_EQ(sum.Count("x"), 5u);
  sum.Remove(b);
  EXPECT_EQ(sum.total(), a.total());
  EXPECT_EQ(sum.map(), a.map());
  EXPECT_EQ(sum.distinct(), 2u);
}

}  // namespace
}  // namespace codedrift
