// The overflow symbol "" of wide fields and byte blocks of 3..4 is handled as the tokens'
// overflow symbol is: written "" in tables and JSON, given a codeword by retraining, costing
// the escape and its literal under a table that does not list it, and counted as unknown.
// Tables and counts are invented for the tests.
#include <string>

#include <gtest/gtest.h>

#include "codedrift/alphabet.h"
#include "codedrift/code_table.h"
#include "codedrift/symbol_counts.h"

namespace codedrift {
namespace {

const SymbolKey kOverflow(kOverflowToken);

TEST(OverflowSymbol, OnlyCappedAlphabetsHaveOne) {
  EXPECT_TRUE(Alphabet::Tokens().HasOverflowSymbol());
  EXPECT_TRUE(Alphabet::Bytes(3).HasOverflowSymbol());
  EXPECT_TRUE(Alphabet::Bytes(4).HasOverflowSymbol());
  EXPECT_TRUE(Alphabet::Field(17).HasOverflowSymbol());
  EXPECT_TRUE(Alphabet::Field(32).HasOverflowSymbol());
  EXPECT_FALSE(Alphabet::Bytes(1).HasOverflowSymbol());
  EXPECT_FALSE(Alphabet::Bytes(2).HasOverflowSymbol());
  EXPECT_FALSE(Alphabet::Field(16).HasOverflowSymbol());
  EXPECT_FALSE(Alphabet::Field(1).HasOverflowSymbol());
}

TEST(OverflowSymbol, WrittenAsEmptyTextAndParsedBack) {
  for (const Alphabet alphabet :
       {Alphabet::Bytes(3), Alphabet::Bytes(4), Alphabet::Field(17), Alphabet::Field(32)}) {
    EXPECT_EQ(alphabet.FormatKey(kOverflow), "") << alphabet.ToString();
    auto parsed = alphabet.ParseKey("");
    ASSERT_TRUE(parsed.ok()) << alphabet.ToString() << ": " << parsed.error().message;
    EXPECT_EQ(parsed.value(), kOverflow);
  }
  // Real values are unchanged: value 0 is "0", not the overflow.
  EXPECT_EQ(Alphabet::Field(32).FormatKey(FieldKey(0)), "0");
  EXPECT_EQ(Alphabet::Field(32).ParseKey("0").value(), FieldKey(0));
  EXPECT_EQ(Alphabet::Bytes(3).FormatKey(std::string(3, '\0')), "0x000000");
}

TEST(OverflowSymbol, RefusedWhereTheAlphabetHasNone) {
  auto field = Alphabet::Field(16).ParseKey("");
  ASSERT_FALSE(field.ok());
  EXPECT_EQ(field.error().message,
            "symbol \"\" (the overflow symbol) is not a field:16 symbol: only byte blocks of 3 "
            "or more bytes and fields wider than 16 bits have one");
  EXPECT_FALSE(Alphabet::Bytes(2).ParseKey("").ok());
  EXPECT_FALSE(Alphabet::Bytes(1).ParseKey("").ok());
}

TEST(OverflowSymbol, TableWithTheOverflowRoundTrips) {
  SymbolCounts counts(Alphabet::Field(32));
  counts.Add(FieldKey(5), 40);
  counts.Add(FieldKey(4000000000u), 20);
  counts.Add(kOverflow, 9);
  counts.Add(FieldKey(0), 1);
  auto trained = TrainPrefixTable(counts, 15, 32);
  ASSERT_TRUE(trained.ok()) << trained.error().message;
  // Retraining gives the overflow symbol a codeword of its own, as for tokens.
  ASSERT_TRUE(trained.value().lengths.contains(kOverflow));
  const std::string text = FormatCodeTable(trained.value());
  EXPECT_NE(text.find("\n  \"\": "), std::string::npos) << text;
  auto loaded = ParseCodeTable(text, "proposal.table");
  ASSERT_TRUE(loaded.ok()) << loaded.error().message << "\n" << text;
  EXPECT_EQ(loaded.value().lengths, trained.value().lengths);
  ASSERT_TRUE(loaded.value().training_counts.has_value());
  EXPECT_EQ(loaded.value().training_counts->Count(kOverflow), 9u);
  EXPECT_EQ(loaded.value().training_counts->Count(FieldKey(0)), 1u);
}

TEST(OverflowSymbol, TableTextRefusesItForSmallAlphabets) {
  const std::string text =
      "table: 1\nalphabet: bytes:2\nkind: prefix\nescape: {length: 2, literal_bits: 8}\n"
      "lengths:\n  0x4142: 1\n  \"\": 2\n";
  auto loaded = ParseCodeTable(text, "small.table");
  ASSERT_FALSE(loaded.ok());
  EXPECT_NE(loaded.error().message.find("small.table:7:"), std::string::npos)
      << loaded.error().message;
  EXPECT_NE(loaded.error().message.find("is not a bytes:2 symbol"), std::string::npos)
      << loaded.error().message;
  auto blocks = ParseCodeTable(
      "table: 1\nalphabet: bytes:3\nkind: prefix\nlengths:\n  0x414243: 1\n  \"\": 1\n",
      "blocks.table");
  ASSERT_TRUE(blocks.ok()) << blocks.error().message;
  EXPECT_TRUE(blocks.value().Covers(kOverflow));
}

// DESIGN.md section 3: a symbol the code does not cover costs the escape codeword plus its
// literal (field: one unit of literal_bits; bytes: literal_bits per byte). Hand-computed.
TEST(OverflowSymbol, CostsTheEscapeUnderATableThatDoesNotListIt) {
  CodeTable field;
  field.alphabet = Alphabet::Field(32);
  field.lengths = {{FieldKey(5), 1}, {FieldKey(6), 2}};
  field.escape = EscapeCode{3, 32};
  EXPECT_EQ(field.CostBits(kOverflow), 3.0 + 32.0);
  SymbolCounts counts(field.alphabet);
  counts.Add(FieldKey(5), 4);
  counts.Add(FieldKey(6), 2);
  counts.Add(kOverflow, 2);
  const TableFit fit = EvaluateTable(field, counts);
  EXPECT_EQ(fit.unknown_symbols, 2u);
  ASSERT_TRUE(fit.deployed_mean_bits.has_value());
  EXPECT_DOUBLE_EQ(*fit.deployed_mean_bits, (4 * 1 + 2 * 2 + 2 * 35) / 8.0);
  // It ranks in top drift like any symbol and is named "" there.
  bool named = false;
  for (const DriftEntry& entry : fit.top_drift) {
    if (entry.key == kOverflow) named = field.alphabet.FormatKey(entry.key).empty();
  }
  EXPECT_TRUE(named);

  CodeTable blocks;
  blocks.alphabet = Alphabet::Bytes(3);
  blocks.lengths = {{"abc", 1}};
  blocks.escape = EscapeCode{1, 8};
  EXPECT_EQ(blocks.CostBits(kOverflow), 1.0 + 3 * 8.0);
}

}  // namespace
}  // namespace codedrift
