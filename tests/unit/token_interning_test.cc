// The tokens symbolizer against a plain reference: a std::map interner with the documented id
// rules (0 end of record, 1 overflow, tokens from 2 in order of first sight, at most
// max_distinct of them). Covers the table's growth, its full state (where a filter turns away
// unknown tokens before the slots are read) and long tokens.
#include <map>
#include <random>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "codedrift/symbolizer.h"

namespace codedrift {
namespace {

class ReferenceInterner {
 public:
  ReferenceInterner(std::string delimiters, bool mask_digits, uint32_t max_distinct)
      : delimiters_(std::move(delimiters) + "\n"),
        mask_digits_(mask_digits),
        max_distinct_(max_distinct) {}

  std::vector<SymbolId> Append(std::string record) {
    if (!record.empty() && record.back() == '\n') {
      record.pop_back();
      if (!record.empty() && record.back() == '\r') record.pop_back();
    }
    std::vector<SymbolId> ids;
    std::string token;
    for (size_t i = 0; i <= record.size(); ++i) {
      if (i == record.size() || delimiters_.find(record[i]) != std::string::npos) {
        if (!token.empty()) ids.push_back(Id(token));
        token.clear();
      } else {
        const char c = record[i];
        token += mask_digits_ && c >= '0' && c <= '9' ? '0' : c;
      }
    }
    ids.push_back(0);
    return ids;
  }

 private:
  SymbolId Id(const std::string& token) {
    const auto found = ids_.find(token);
    if (found != ids_.end()) return found->second;
    if (ids_.size() >= max_distinct_) return 1;
    const auto id = static_cast<SymbolId>(2 + ids_.size());
    ids_.emplace(token, id);
    return id;
  }

  std::string delimiters_;
  bool mask_digits_;
  uint32_t max_distinct_;
  std::map<std::string, SymbolId> ids_;
};

// A token drawn from a skewed vocabulary (a few frequent words) or made up fresh, of lengths
// 1..40 so short (<= 16 bytes) and long keys both occur; bytes include digits and high bytes.
std::string RandomToken(std::mt19937_64& rng) {
  static const char kBytes[] = "abcxyz0123456789-._\x80\xff";
  if (rng() % 3 != 0) return "word" + std::to_string(rng() % 50);
  std::string token;
  const size_t length = 1 + rng() % 40;
  for (size_t i = 0; i < length; ++i) token += kBytes[rng() % (sizeof kBytes - 1)];
  return token;
}

TEST(TokenInterningProperty, IdsEqualAReferenceInternerBeforeAndAfterTheTableFills) {
  // Property (invented seeded data): for caps below, at and far above the number of distinct
  // tokens seen, masked or not, every record's ids equal the reference interner's, and every
  // id's key is the token text it stands for.
  for (const uint32_t max_distinct : {1u, 7u, 300u, 5000u, 65536u}) {
    for (const bool mask_digits : {false, true}) {
      TokenOptions options;
      options.delimiters = " =,";
      options.mask_digits = mask_digits;
      options.max_distinct = max_distinct;
      auto symbolizer = MakeTokenSymbolizer(options);
      ReferenceInterner reference(options.delimiters, mask_digits, max_distinct);
      std::mt19937_64 rng(max_distinct * 2 + (mask_digits ? 1 : 0));
      for (int record_number = 0; record_number < 3000; ++record_number) {
        std::string record;
        const int tokens = static_cast<int>(rng() % 12);
        for (int t = 0; t < tokens; ++t) {
          record += RandomToken(rng);
          record += " =,"[rng() % 3];
        }
        record += '\n';
        std::vector<SymbolId> ids;
        symbolizer->Append(record, ids);
        ASSERT_EQ(ids, reference.Append(record))
            << "max_distinct " << max_distinct << " mask " << mask_digits << " record "
            << record_number << ": " << record;
      }
      EXPECT_LE(symbolizer->IdLimit(), 2 + max_distinct);
    }
  }
}

TEST(TokenInterningProperty, ATokenGetsOneIdWhereverItStandsInItsRecord) {
  // Property (invented seeded data): short tokens are read one way at the start of a record
  // and another way further in (one load ending at the token's end); for tokens of every
  // length 1..40 over all byte values but the delimiters, masked or not, both readings must
  // find the same id, and the key must be the token's (masked) text.
  for (const bool mask_digits : {false, true}) {
    TokenOptions options;
    options.delimiters = " ";
    options.mask_digits = mask_digits;
    auto symbolizer = MakeTokenSymbolizer(options);
    std::mt19937_64 rng(mask_digits ? 99 : 98);
    for (int round = 0; round < 4000; ++round) {
      const size_t length = 1 + static_cast<size_t>(round % 40);
      std::string token;
      while (token.size() < length) {
        const auto c = static_cast<char>(rng() % 256);
        if (c != ' ' && c != '\n') token += c;
      }
      std::string expected = token;
      for (char& c : expected) {
        if (mask_digits && c >= '0' && c <= '9') c = '0';
      }
      const std::string prefix(1 + rng() % 24, 'q');
      std::vector<SymbolId> at_start;
      std::vector<SymbolId> further_in;
      symbolizer->Append(token + " " + prefix, at_start);
      symbolizer->Append(prefix + " " + token, further_in);
      ASSERT_EQ(at_start.size(), 3u);
      ASSERT_EQ(further_in.size(), 3u);
      ASSERT_EQ(at_start[0], further_in[1]) << "round " << round << " length " << length;
      ASSERT_EQ(symbolizer->KeyOf(at_start[0]), expected) << "round " << round;
    }
  }
}

TEST(TokenInterning, AFullTableStillFindsEveryTokenItHolds) {
  // Fill the table to its cap, then look every stored token up again among many unknown
  // ones: the stored ones keep their ids, the unknown ones are the overflow symbol.
  TokenOptions options;
  options.max_distinct = 4000;
  auto symbolizer = MakeTokenSymbolizer(options);
  std::vector<SymbolId> first;
  std::string record;
  for (int i = 0; i < 4000; ++i) record += "k" + std::to_string(i * 31) + " ";
  symbolizer->Append(record, first);
  ASSERT_EQ(symbolizer->IdLimit(), 4002u);
  for (int i = 0; i < 4000; ++i) {
    std::vector<SymbolId> ids;
    symbolizer->Append("unknown" + std::to_string(i) + " k" + std::to_string(i * 31), ids);
    ASSERT_EQ(ids, (std::vector<SymbolId>{1, first[static_cast<size_t>(i)], 0})) << i;
  }
  EXPECT_EQ(symbolizer->IdLimit(), 4002u);
}

}  // namespace
}  // namespace codedrift
