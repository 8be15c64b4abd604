#include "codedrift/symbolizer.h"

#include <cmath>
#include <map>
#include <random>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "codedrift/entropy.h"

namespace codedrift {
namespace {

using Ids = std::vector<SymbolId>;

std::vector<SymbolKey> KeysOf(const Symbolizer& symbolizer, const Ids& ids) {
  std::vector<SymbolKey> keys;
  for (SymbolId id : ids) keys.push_back(symbolizer.KeyOf(id));
  return keys;
}

std::string Bytes(std::initializer_list<int> values) {
  std::string out;
  for (int v : values) out += static_cast<char>(v);
  return out;
}

// ---------------------------------------------------------------------------------------------
// bytes

TEST(BytesSymbolizer, SingleBytesAreTheirOwnIds) {
  auto symbolizer = MakeBytesSymbolizer(1);
  ASSERT_NE(symbolizer, nullptr);
  EXPECT_EQ(symbolizer->alphabet(), Alphabet::Bytes(1));
  Ids ids;
  EXPECT_EQ(symbolizer->Append(std::string("A\n\xff\0", 4), ids), 4u);
  EXPECT_EQ(ids, (Ids{0x41, 0x0a, 0xff, 0x00}));
  EXPECT_EQ(symbolizer->IdLimit(), 256u);
  EXPECT_EQ(symbolizer->KeyOf(0x41), "A");
  EXPECT_EQ(symbolizer->KeyOf(0xff), "\xff");
  EXPECT_EQ(symbolizer->Append("", ids), 0u);
}

TEST(BytesSymbolizer, BlocksGetDenseIdsInOrderOfFirstSight) {
  auto symbolizer = MakeBytesSymbolizer(2);
  ASSERT_NE(symbolizer, nullptr);
  EXPECT_EQ(symbolizer->alphabet(), Alphabet::Bytes(2));
  Ids ids;
  EXPECT_EQ(symbolizer->Append("ABCDABzz", ids), 4u);
  EXPECT_EQ(ids, (Ids{0, 1, 0, 2}));
  EXPECT_EQ(symbolizer->IdLimit(), 3u);
  EXPECT_EQ(KeysOf(*symbolizer, ids), (std::vector<SymbolKey>{"AB", "CD", "AB", "zz"}));
}

TEST(BytesSymbolizer, PartialBlockWaitsForTheNextRecord) {
  auto symbolizer = MakeBytesSymbolizer(3);
  ASSERT_NE(symbolizer, nullptr);
  Ids ids;
  EXPECT_EQ(symbolizer->Append("abcd", ids), 1u);    // "abc", "d" pending
  EXPECT_EQ(symbolizer->Append("e", ids), 0u);       // "de" pending
  EXPECT_EQ(symbolizer->Append("fghi\n", ids), 2u);  // "def", "ghi", "\n" pending
  EXPECT_EQ(symbolizer->Append("ab", ids), 1u);      // "\nab"
  EXPECT_EQ(KeysOf(*symbolizer, ids), (std::vector<SymbolKey>{"abc", "def", "ghi", "\nab"}));
}

TEST(BytesSymbolizer, FourByteBlocksKeepEveryByte) {
  auto symbolizer = MakeBytesSymbolizer(4);
  ASSERT_NE(symbolizer, nullptr);
  Ids ids;
  const std::string record = Bytes({0x00, 0x00, 0x00, 0x00, 0xff, 0x00, 0x80, 0x01});
  EXPECT_EQ(symbolizer->Append(record, ids), 2u);
  EXPECT_EQ(symbolizer->KeyOf(ids[0]), Bytes({0, 0, 0, 0}));
  EXPECT_EQ(symbolizer->KeyOf(ids[1]), Bytes({0xff, 0x00, 0x80, 0x01}));
  EXPECT_EQ(Alphabet::Bytes(4).FormatKey(symbolizer->KeyOf(ids[1])), "0xff008001");
}

TEST(BytesSymbolizer, ManyDistinctBlocksStayDenseAndDistinct) {
  // 65536 distinct pairs force several table growths; ids must stay 0..K-1 and round-trip.
  auto symbolizer = MakeBytesSymbolizer(2);
  ASSERT_NE(symbolizer, nullptr);
  std::string record;
  for (uint32_t v = 0; v < 65536; ++v) {
    const uint32_t pair = (v * 40503u) & 0xffff;  // odd multiplier: a permutation of 0..65535
    record += static_cast<char>(pair >> 8);
    record += static_cast<char>(pair & 0xff);
  }
  Ids ids;
  symbolizer->Append(record, ids);
  ASSERT_EQ(ids.size(), 65536u);
  EXPECT_EQ(symbolizer->IdLimit(), 65536u);
  for (size_t i = 0; i < ids.size(); ++i) {
    ASSERT_EQ(ids[i], i);  // every pair is new, so ids count up
    ASSERT_EQ(symbolizer->KeyOf(ids[i]), record.substr(2 * i, 2));
  }
  Ids again;
  symbolizer->Append(record, again);
  EXPECT_EQ(again, ids);
}

TEST(BytesSymbolizer, RejectsBlockSizesOutsideOneToFour) {
  EXPECT_EQ(MakeBytesSymbolizer(0), nullptr);
  EXPECT_EQ(MakeBytesSymbolizer(5), nullptr);
}

// Block entropy of an i.i.d. source: H(S^n) = n H (Cover & Thomas, Theorem 2.6.6 chain rule,
// from memory), so H(S^n)/n estimated from n-byte block counts must agree with H within a few
// standard errors. Invented seeded source with p = (1/2, 1/4, 1/8, 1/8), H = 1.75.
TEST(BytesSymbolizer, BlockEntropyOfIidSourceMatchesSingleSymbolEntropy) {
  std::mt19937_64 rng(424242);
  std::discrete_distribution<int> draw({4, 2, 1, 1});
  const char kSymbols[] = {'a', 'b', 'c', 'd'};
  for (int n = 1; n <= 4; ++n) {
    auto symbolizer = MakeBytesSymbolizer(n);
    ASSERT_NE(symbolizer, nullptr);
    Ids ids;
    // 1000 records of 997 bytes: many blocks straddle records.
    for (int r = 0; r < 1000; ++r) {
      std::string record;
      for (int i = 0; i < 997; ++i) record += kSymbols[draw(rng)];
      symbolizer->Append(record, ids);
    }
    std::vector<uint64_t> counts(symbolizer->IdLimit(), 0);
    for (SymbolId id : ids) ++counts[id];
    const EntropyEstimate estimate = EstimateEntropy(counts);
    const double per_symbol = estimate.miller_madow_bits / n;
    const double stderr_per_symbol = estimate.stderr_bits / n;
    EXPECT_NEAR(per_symbol, 1.75, 4 * stderr_per_symbol) << "block " << n;
    EXPECT_LE(estimate.distinct, uint64_t{1} << (2 * n));
  }
}

// ---------------------------------------------------------------------------------------------
// tokens

TEST(TokenSymbolizer, SplitsOnDelimitersAndEndsEachRecord) {
  TokenOptions options;
  options.delimiters = " =,";
  auto symbolizer = MakeTokenSymbolizer(options);
  ASSERT_NE(symbolizer, nullptr);
  EXPECT_EQ(symbolizer->alphabet(), Alphabet::Tokens());
  Ids ids;
  EXPECT_EQ(symbolizer->Append("temp=14.2 node=a,,temp=15\n", ids), 7u);
  EXPECT_EQ(KeysOf(*symbolizer, ids),
            (std::vector<SymbolKey>{"temp", "14.2", "node", "a", "temp", "15", "\n"}));
  // Reserved ids: end of record 0, overflow 1; tokens from 2 in order of first sight.
  EXPECT_EQ(ids, (Ids{2, 3, 4, 5, 2, 6, 0}));
  EXPECT_EQ(symbolizer->IdLimit(), 7u);
  EXPECT_EQ(symbolizer->KeyOf(0), kEndOfRecordToken);
  EXPECT_EQ(symbolizer->KeyOf(1), kOverflowToken);
}

TEST(TokenSymbolizer, LineTerminatorIsNotPartOfAnyToken) {
  auto symbolizer = MakeTokenSymbolizer(TokenOptions{});
  Ids ids;
  symbolizer->Append("ok\r\n", ids);
  symbolizer->Append("ok\n", ids);
  symbolizer->Append("ok", ids);
  EXPECT_EQ(KeysOf(*symbolizer, ids), (std::vector<SymbolKey>{"ok", "\n", "ok", "\n", "ok", "\n"}));
  // A carriage return that does not end the line stays in its token.
  ids.clear();
  symbolizer->Append("a\rb\n", ids);
  EXPECT_EQ(symbolizer->KeyOf(ids[0]), "a\rb");
}

TEST(TokenSymbolizer, EmptyTokensAndEmptyRecordsGiveOnlyEndOfRecord) {
  auto symbolizer = MakeTokenSymbolizer(TokenOptions{});
  Ids ids;
  EXPECT_EQ(symbolizer->Append("", ids), 1u);
  EXPECT_EQ(symbolizer->Append("\n", ids), 1u);
  EXPECT_EQ(symbolizer->Append(" ,= ,\n", ids), 1u);
  EXPECT_EQ(ids, (Ids{0, 0, 0}));
  // A newline inside a record (a datagram holding two lines) always separates tokens.
  ids.clear();
  EXPECT_EQ(symbolizer->Append("x\ny\n", ids), 3u);
  EXPECT_EQ(KeysOf(*symbolizer, ids), (std::vector<SymbolKey>{"x", "y", "\n"}));
}

TEST(TokenSymbolizer, MasksDigitsWhenAsked) {
  TokenOptions options;
  options.mask_digits = true;
  auto symbolizer = MakeTokenSymbolizer(options);
  Ids ids;
  symbolizer->Append("t=1733059200 batt=3.71 node=orchard-17\n", ids);
  EXPECT_EQ(KeysOf(*symbolizer, ids), (std::vector<SymbolKey>{"t", "0000000000", "batt", "0.00",
                                                              "node", "orchard-00", "\n"}));
  Ids more;
  symbolizer->Append("batt=4.05\n", more);
  EXPECT_EQ(more[1], ids[3]);  // "4.05" and "3.71" mask to the same symbol

  auto plain = MakeTokenSymbolizer(TokenOptions{});
  Ids unmasked;
  plain->Append("batt=3.71 batt=4.05", unmasked);
  EXPECT_NE(unmasked[1], unmasked[3]);
}

TEST(TokenSymbolizer, MaskingTouchesExactlyTheAsciiDigitsAtEveryLength) {
  // Property (invented seeded data): for tokens of every length 1..24 over bytes chosen to sit
  // next to the digit range ('/', ':', 0xb0..0xb9, 0x00, 0xff), the stored key is the token
  // with '0'..'9' replaced by '0' and nothing else changed, and tokens that mask alike share
  // one id.
  TokenOptions options;
  options.mask_digits = true;
  options.delimiters = " ";
  auto symbolizer = MakeTokenSymbolizer(options);
  std::mt19937_64 rng(31337);
  const std::string kBytes = std::string("0123456789/:Aa") + Bytes({0xb0, 0xb5, 0xb9, 0x00, 0xff});
  std::map<std::string, SymbolId> id_of_masked;
  for (int round = 0; round < 2000; ++round) {
    const size_t length = 1 + static_cast<size_t>(round % 24);
    std::string token;
    for (size_t i = 0; i < length; ++i) token += kBytes[rng() % kBytes.size()];
    std::string masked = token;
    for (char& c : masked) {
      if (c >= '0' && c <= '9') c = '0';
    }
    Ids ids;
    ASSERT_EQ(symbolizer->Append(token, ids), 2u);
    ASSERT_EQ(symbolizer->KeyOf(ids[0]), masked) << "round " << round;
    const auto [it, inserted] = id_of_masked.emplace(masked, ids[0]);
    EXPECT_EQ(it->second, ids[0]) << "round " << round;
  }
}

TEST(TokenSymbolizer, TokensBeyondMaxDistinctShareTheOverflowId) {
  TokenOptions options;
  options.max_distinct = 2;
  auto symbolizer = MakeTokenSymbolizer(options);
  Ids ids;
  symbolizer->Append("a b c a d b\n", ids);
  // a, b are kept; c and d arrive when the table is full.
  EXPECT_EQ(ids, (Ids{2, 3, 1, 2, 1, 3, 0}));
  EXPECT_EQ(symbolizer->IdLimit(), 4u);
  EXPECT_EQ(symbolizer->KeyOf(1), "");
}

TEST(TokenSymbolizer, InternsManyTokensAcrossTableGrowth) {
  auto symbolizer = MakeTokenSymbolizer(TokenOptions{});
  std::string record;
  for (int i = 0; i < 20000; ++i) record += "tok" + std::to_string(i * 7919) + " ";
  Ids first;
  symbolizer->Append(record, first);
  ASSERT_EQ(first.size(), 20001u);
  Ids second;
  symbolizer->Append(record, second);
  EXPECT_EQ(first, second);
  EXPECT_EQ(symbolizer->IdLimit(), 20002u);
  for (int i = 0; i < 20000; i += 997) {
    EXPECT_EQ(symbolizer->KeyOf(first[static_cast<size_t>(i)]), "tok" + std::to_string(i * 7919));
  }
  // Tokens longer than one hash word, differing only in their last byte, stay distinct.
  Ids longer;
  symbolizer->Append("abcdefghijklmnopq1 abcdefghijklmnopq2", longer);
  EXPECT_NE(longer[0], longer[1]);
}

// ---------------------------------------------------------------------------------------------
// field

FieldOptions Field(uint32_t offset_bits, int width_bits, FieldOrder order,
                   FieldTransform transform = FieldTransform::kNone) {
  FieldOptions options;
  options.offset_bits = offset_bits;
  options.width_bits = width_bits;
  options.order = order;
  options.transform = transform;
  return options;
}

SymbolId OneValue(Symbolizer& symbolizer, const std::string& record) {
  Ids ids;
  EXPECT_EQ(symbolizer.Append(record, ids), 1u);
  return ids.empty() ? 0 : ids[0];
}

TEST(FieldSymbolizer, ReadsBigEndianBitFields) {
  // Packet bits (network order): 1010 1011 1100 1101 1110 1111 = 0xab 0xcd 0xef.
  const std::string packet = Bytes({0xab, 0xcd, 0xef});
  auto byte1 = MakeFieldSymbolizer(Field(8, 8, FieldOrder::kBig));
  EXPECT_EQ(OneValue(*byte1, packet), 0xcdu);
  auto nibble = MakeFieldSymbolizer(Field(4, 12, FieldOrder::kBig));
  EXPECT_EQ(OneValue(*nibble, packet), 0xbcdu);
  auto odd = MakeFieldSymbolizer(Field(3, 5, FieldOrder::kBig));  // bits 3..7 of 0xab: 01011
  EXPECT_EQ(OneValue(*odd, packet), 0x0bu);
  auto single = MakeFieldSymbolizer(Field(0, 1, FieldOrder::kBig));
  EXPECT_EQ(OneValue(*single, packet), 1u);
  EXPECT_EQ(single->IdLimit(), 2u);
  EXPECT_EQ(byte1->alphabet(), Alphabet::Field(8));
  EXPECT_EQ(FieldValue(nibble->KeyOf(0xbcd)), 0xbcdu);
}

TEST(FieldSymbolizer, ReadsLittleEndianBitFields) {
  // Little endian: P = 0xefcdab (bytes ab cd ef); field = (P >> offset) mod 2^width.
  const std::string packet = Bytes({0xab, 0xcd, 0xef});
  auto word = MakeFieldSymbolizer(Field(0, 16, FieldOrder::kLittle));
  EXPECT_EQ(OneValue(*word, packet), 0xcdabu);
  auto middle = MakeFieldSymbolizer(Field(4, 12, FieldOrder::kLittle));
  EXPECT_EQ(OneValue(*middle, packet), 0xcdau);
  auto low3 = MakeFieldSymbolizer(Field(0, 3, FieldOrder::kLittle));  // 0xab = ...011
  EXPECT_EQ(OneValue(*low3, packet), 3u);
  auto straddle = MakeFieldSymbolizer(Field(6, 4, FieldOrder::kLittle));  // 0xdab >> 6 = 0x36
  EXPECT_EQ(OneValue(*straddle, packet), 0x6u);
}

TEST(FieldSymbolizer, WideFieldsAtOddOffsetsInternDensely) {
  // 32 bits starting at bit 4 span five bytes.
  const std::string packet = Bytes({0xf1, 0x23, 0x45, 0x67, 0x89, 0xff});
  auto big = MakeFieldSymbolizer(Field(4, 32, FieldOrder::kBig));
  Ids ids;
  big->Append(packet, ids);
  big->Append(Bytes({0x00, 0x00, 0x00, 0x00, 0x00}), ids);
  big->Append(packet, ids);
  EXPECT_EQ(ids, (Ids{0, 1, 0}));
  EXPECT_EQ(big->IdLimit(), 2u);
  EXPECT_EQ(FieldValue(big->KeyOf(0)), 0x12345678u);
  EXPECT_EQ(FieldValue(big->KeyOf(1)), 0u);

  auto little = MakeFieldSymbolizer(Field(4, 32, FieldOrder::kLittle));
  Ids lids;
  little->Append(packet, lids);
  // P = 0x...8967452 3f1 -> (P >> 4) mod 2^32 = 0x9674523f.
  EXPECT_EQ(FieldValue(little->KeyOf(lids[0])), 0x9674523fu);
}

TEST(FieldSymbolizer, DeltaIsModuloTheWidthAgainstThePreviousRawValue) {
  auto delta = MakeFieldSymbolizer(Field(0, 8, FieldOrder::kBig, FieldTransform::kDelta));
  Ids ids;
  for (int v : {5, 7, 7, 2, 250, 4}) delta->Append(Bytes({v}), ids);
  // First record against 0; 2 - 7 = -5 = 251 mod 256; 4 - 250 = -246 = 10 mod 256.
  EXPECT_EQ(ids, (Ids{5, 2, 0, 251, 248, 10}));
}

TEST(FieldSymbolizer, XorAgainstThePreviousRawValue) {
  auto x = MakeFieldSymbolizer(Field(4, 4, FieldOrder::kBig, FieldTransform::kXor));
  Ids ids;
  for (int v : {0x0a, 0x0a, 0x05, 0x0c}) x->Append(Bytes({v}), ids);
  EXPECT_EQ(ids, (Ids{0xa, 0x0, 0xf, 0x9}));
}

TEST(FieldSymbolizer, ShortRecordsAreSkippedAndCounted) {
  auto delta = MakeFieldSymbolizer(Field(12, 8, FieldOrder::kBig, FieldTransform::kDelta));
  Ids ids;
  EXPECT_EQ(delta->Append(Bytes({0x00, 0x01, 0x00}), ids), 1u);  // value 0x10
  EXPECT_EQ(delta->Append(Bytes({0x00, 0x02}), ids), 0u);        // needs 3 bytes: skipped
  EXPECT_EQ(delta->Append("", ids), 0u);
  EXPECT_EQ(delta->Append(Bytes({0x00, 0x01, 0x80}), ids), 1u);  // 0x18 - 0x10
  EXPECT_EQ(ids, (Ids{0x10, 0x08}));
  EXPECT_EQ(delta->skipped_records(), 2u);
}

TEST(FieldSymbolizer, RejectsWidthsOutsideOneToThirtyTwo) {
  EXPECT_EQ(MakeFieldSymbolizer(Field(0, 0, FieldOrder::kBig)), nullptr);
  EXPECT_EQ(MakeFieldSymbolizer(Field(0, 33, FieldOrder::kBig)), nullptr);
  EXPECT_NE(MakeFieldSymbolizer(Field(0, 32, FieldOrder::kLittle)), nullptr);
}

}  // namespace
}  // namespace codedrift
