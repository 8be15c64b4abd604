// symbols.max_distinct for byte blocks of 3..4 and fields wider than 16 bits: accepted with
// the tokens' range and default, refused (with 1-based line:column, counted by hand from the
// YAML text beside each case) where every value already has an id. Config texts are invented.
#include <string>

#include <gtest/gtest.h>

#include "codedrift/daemon_config.h"

#include "daemon_config_fixtures.h"

namespace codedrift {
namespace {

using namespace config_test;  // NOLINT(google-build-using-namespace)

const SymbolsConfig& SymbolsOf(const DaemonConfig& config) {
  return config.streams.at(0).models.at(0).symbols;
}

SymbolsConfig ParseSymbols(const std::string& symbols_line) {
  return SymbolsOf(ParseOk(With(kStreamHead, symbols_line)));
}

TEST(DaemonConfigMaxDistinct, AcceptedForBlocksOfThreeOrFourAndWideFields) {
  EXPECT_EQ(ParseSymbols("        symbols: {kind: bytes, block: 3, max_distinct: 1000}\n")
                .bytes.max_distinct,
            1000u);
  EXPECT_EQ(ParseSymbols("        symbols: {kind: bytes, block: 4, max_distinct: 1}\n")
                .bytes.max_distinct,
            1u);
  EXPECT_EQ(ParseSymbols("        symbols: {kind: field, width_bits: 17, max_distinct: 500}\n")
                .field.max_distinct,
            500u);
  EXPECT_EQ(ParseSymbols("        symbols: {kind: field, width_bits: 32, max_distinct: 16777216}\n")
                .field.max_distinct,
            16777216u);
}

TEST(DaemonConfigMaxDistinct, DefaultIsTheTokensDefault) {
  const uint32_t tokens_default = TokenOptions{}.max_distinct;
  EXPECT_EQ(tokens_default, 65536u);  // DESIGN.md section 5: max_distinct: 65536
  EXPECT_EQ(ParseSymbols("        symbols: {kind: bytes, block: 4}\n").bytes.max_distinct,
            tokens_default);
  EXPECT_EQ(ParseSymbols("        symbols: {kind: field, width_bits: 32}\n").field.max_distinct,
            tokens_default);
}

TEST(DaemonConfigMaxDistinct, RefusedWhereEveryValueHasAnId) {
  // "        symbols: {kind: bytes, block: 2, max_distinct: 10}": the key at column 42.
  EXPECT_EQ(
      ErrorOf(With(kStreamHead, "        symbols: {kind: bytes, block: 2, max_distinct: 10}\n")),
      "demo.yaml:6:42: key 'max_distinct' does not apply to blocks of 2 bytes (every one "
      "of their 65536 values has an id of its own), expected it only with block 3 or 4 "
      "(bytes) or width_bits 17 to 32 (field)");
  // "        symbols: {kind: bytes, max_distinct: 10}": block 1 by default, key at column 32.
  EXPECT_EQ(ErrorOf(With(kStreamHead, "        symbols: {kind: bytes, max_distinct: 10}\n")),
            "demo.yaml:6:32: key 'max_distinct' does not apply to blocks of 1 byte (every one "
            "of their 256 values has an id of its own), expected it only with block 3 or 4 "
            "(bytes) or width_bits 17 to 32 (field)");
  // "        symbols: {kind: field, width_bits: 16, max_distinct: 10}": key at column 48.
  EXPECT_EQ(
      ErrorOf(
          With(kStreamHead, "        symbols: {kind: field, width_bits: 16, max_distinct: 10}\n")),
      "demo.yaml:6:48: key 'max_distinct' does not apply to 16-bit fields (every one of their "
      "65536 values has an id of its own), expected it only with block 3 or 4 (bytes) or "
      "width_bits 17 to 32 (field)");
}

TEST(DaemonConfigMaxDistinct, BadValuesAreRefusedWithTheirPosition) {
  // The value sits at column 62 ("...width_bits: 32, max_distinct: " is 61 characters).
  EXPECT_EQ(ErrorOf(With(kStreamHead,
                         "        symbols: {kind: field, width_bits: 32, max_distinct: 0}\n")),
            "demo.yaml:6:62: max_distinct: 0 is out of range, expected 1..16777216");
  EXPECT_EQ(ErrorOf(With(kStreamHead,
                         "        symbols: {kind: field, width_bits: 24, max_distinct: lots}\n")),
            "demo.yaml:6:62: max_distinct: expected a whole number 1..16777216, got 'lots'");
  // Column 56 ("...block: 3, max_distinct: " is 55 characters).
  EXPECT_EQ(ErrorOf(With(kStreamHead,
                         "        symbols: {kind: bytes, block: 3, max_distinct: 16777217}\n")),
            "demo.yaml:6:56: max_distinct: 16777217 is out of range, expected 1..16777216");
}

TEST(DaemonConfigMaxDistinct, KeyListsOfBytesAndFieldNameIt) {
  EXPECT_EQ(ErrorOf(With(kStreamHead, "        symbols: {kind: bytes, width_bits: 8}\n")),
            "demo.yaml:6:32: key 'width_bits' does not apply to symbols of kind bytes, expected "
            "block or max_distinct");
  EXPECT_EQ(ErrorOf(With(kStreamHead, "        symbols: {kind: field, block: 2}\n")),
            "demo.yaml:6:32: key 'block' does not apply to symbols of kind field, expected "
            "offset_bits, width_bits, order, transform or max_distinct");
}

}  // namespace
}  // namespace codedrift
