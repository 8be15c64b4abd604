// The line memo of the tokens symbolizer: a run scanned with a memo gives exactly the ids the
// token-by-token scan gives, stops before the same line, and the memo judges itself (on while
// lines repeat, off for a stretch while they do not, emptied when the table is replaced).
// Property tests on invented telemetry lines; the oracle is the same symbolizer without memo.
#include "line_memo.h"

#include <algorithm>
#include <random>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "token_symbolizer.h"

namespace codedrift {
namespace {

// What Model does with a run: the known lines (with the memo when given), then the rest
// stored token by token. Returns the bytes the known scan took.
size_t Feed(TokenSymbolizer& symbolizer, LineMemo* memo, std::string_view run,
            std::vector<SymbolId>& ids) {
  const size_t done = symbolizer.AppendKnownLines(run, ids, memo);
  if (done < run.size()) symbolizer.AppendLines(run.substr(done), ids);
  return done;
}

// Invented orchard-station lines from a few shapes: digits vary, so masked lines repeat and
// unmasked ones mostly do not; some lines are short, some long, some end in "\r", some carry
// a fresh word (a token to store), some are empty or delimiters only.
std::string StationLine(std::mt19937_64& rng, int i) {
  static const char* const kKinds[] = {"frost", "humidity", "leaf_temp", "wind"};
  static const char* const kStates[] = {"ok", "ok", "ok", "low_batt", "probe_fault"};
  const auto digits = [&rng](int n) {
    std::string s;
    for (int k = 0; k < n; ++k) s += static_cast<char>('0' + rng() % 10);
    return s;
  };
  std::string line;
  switch (rng() % 10) {
    case 0:
      line = "ack " + digits(2);  // shorter than one chunk
      break;
    case 1:
      line = "dump=" + std::string(1100 + rng() % 50, 'v');  // longer than a memo line
      break;
    case 2:
      line = (rng() % 2 == 0) ? "" : " ,, == ,, == ,, == ";
      break;
    default:
      line = "2026-11-30T" + digits(2) + ":" + digits(2) + " block=" + digits(1 + rng() % 3) +
             " kind=" + kKinds[rng() % 4] + " value=" + digits(1 + rng() % 2) + "." + digits(2) +
             " state=" + kStates[rng() % 5];
  }
  if (i % 97 == 0) line += " fresh" + std::to_string(i);
  if (rng() % 5 == 0) line += "\r";
  return line + "\n";
}

struct Case {
  bool mask_digits;
  uint32_t max_distinct;
  std::string delimiters = " =,";
};

TEST(LineMemoProperty, RunsThroughTheMemoGiveTheIdsOfTheTokenScan) {
  for (const Case& c : {Case{true, 65536}, Case{false, 65536}, Case{true, 12}, Case{false, 30},
                        Case{true, 65536, " =.0"}}) {
    SCOPED_TRACE(testing::Message() << "mask " << c.mask_digits << " max_distinct "
                                    << c.max_distinct << " delimiters '" << c.delimiters << "'");
    const TokenOptions options{
        .delimiters = c.delimiters, .mask_digits = c.mask_digits, .max_distinct = c.max_distinct};
    TokenSymbolizer with_memo(options);
    TokenSymbolizer plain(options);
    LineMemo memo;
    std::mt19937_64 rng(c.max_distinct + (c.mask_digits ? 7 : 0));
    int line_number = 0;
    for (int run_number = 0; run_number < 600; ++run_number) {
      std::string run;
      for (int k = 1 + static_cast<int>(rng() % 40); k > 0; --k) {
        run += StationLine(rng, line_number++);
      }
      if (run_number % 50 == 0) run += "tail=3.5\r";  // a last line without its newline
      // Runs append to ids already there, as Model's do after a stop.
      std::vector<SymbolId> expected(run_number % 3, 7);
      std::vector<SymbolId> actual(run_number % 3, 7);
      const size_t plain_done = Feed(plain, nullptr, run, expected);
      ASSERT_EQ(Feed(with_memo, &memo, run, actual), plain_done) << "run " << run_number;
      ASSERT_EQ(actual, expected) << "run " << run_number;
    }
    ASSERT_EQ(with_memo.IdLimit(), plain.IdLimit());
    for (SymbolId id = 0; id < plain.IdLimit(); ++id)
      EXPECT_EQ(with_memo.KeyOf(id), plain.KeyOf(id));
    if (c.delimiters.find('0') != std::string::npos) {
      // Masked, "1.5" and "0.5" are the same text but split apart only at the '0': no memo.
      EXPECT_EQ(memo.stats().lookups, 0u);
    } else if (c.mask_digits) {
      EXPECT_GT(memo.stats().hits, memo.stats().lookups / 2);
    }
  }
}

// Lines from a known vocabulary in random order: every token known, lines almost never twice.
std::string ShuffledLine(std::mt19937_64& rng) {
  std::string line;
  for (int k = 0; k < 8; ++k) line += "w" + std::to_string(rng() % 40) + " ";
  return line + "\n";
}

// A symbolizer that has stored every word ShuffledLine uses.
TokenSymbolizer VocabularyKnown() {
  TokenSymbolizer symbolizer(TokenOptions{.delimiters = " ", .mask_digits = false});
  std::string vocabulary;
  for (int w = 0; w < 40; ++w) vocabulary += "w" + std::to_string(w) + "\n";
  std::vector<SymbolId> ids;
  symbolizer.AppendLines(vocabulary, ids);
  return symbolizer;
}

TEST(LineMemoJudgement, TurnsOffWhileLinesDoNotRepeatAndTriesAgainLater) {
  TokenSymbolizer symbolizer = VocabularyKnown();
  std::vector<SymbolId> ids;

  LineMemo memo;
  std::mt19937_64 rng(5);
  const auto run_of = [&rng](size_t lines) {
    std::string run;
    for (size_t k = 0; k < lines; ++k) run += ShuffledLine(rng);
    return run;
  };
  // One judged stretch of lookups, nearly all misses: the memo turns off.
  const std::string stretch = run_of(LineMemo::kJudgedLookups);
  ids.clear();
  EXPECT_EQ(symbolizer.AppendKnownLines(stretch, ids, &memo), stretch.size());
  EXPECT_EQ(memo.stats().lookups, LineMemo::kJudgedLookups);
  EXPECT_EQ(memo.stats().turned_off, 1u);
  // Off: runs are scanned token by token, with the same ids, until kOffBytes have passed.
  const std::string run = run_of(1000);
  uint64_t passed = 0;
  while (passed + run.size() <= LineMemo::kOffBytes) {
    std::vector<SymbolId> expected;
    ids.clear();
    EXPECT_EQ(symbolizer.AppendKnownLines(run, ids, &memo), run.size());
    symbolizer.AppendKnownLines(run, expected);
    ASSERT_EQ(ids, expected);
    passed += run.size();
  }
  EXPECT_EQ(memo.stats().lookups, LineMemo::kJudgedLookups);
  // Then it looks lines up again, and repeated ones are found.
  for (int i = 0; i < 3; ++i) {
    ids.clear();
    symbolizer.AppendKnownLines(run, ids, &memo);
  }
  EXPECT_GT(memo.stats().lookups, LineMemo::kJudgedLookups);
  EXPECT_GE(memo.stats().hits, 1000u);
  EXPECT_EQ(memo.stats().turned_off, 1u);
}

TEST(LineMemoBounds, StartsOverWhenFullAndStaysExact) {
  TokenSymbolizer symbolizer = VocabularyKnown();
  std::vector<SymbolId> ids;
  LineMemo memo;
  std::mt19937_64 rng(9);
  // Each distinct line twice in a row: half the lookups hit, so the memo stays on, and more
  // distinct lines than it holds.
  for (size_t line = 0; line < 3 * LineMemo::kMaxEntries; ++line) {
    const std::string text = ShuffledLine(rng);
    const std::string run = text + text;
    std::vector<SymbolId> expected;
    ids.clear();
    ASSERT_EQ(symbolizer.AppendKnownLines(run, ids, &memo), run.size());
    symbolizer.AppendKnownLines(run, expected);
    ASSERT_EQ(ids, expected);
  }
  EXPECT_EQ(memo.stats().turned_off, 0u);
  EXPECT_GE(memo.stats().clears, 2u);
  EXPECT_EQ(memo.stats().hits, 3 * LineMemo::kMaxEntries);
}

TEST(LineMemoGeneration, ATableTakenFromACheckpointEmptiesTheMemo) {
  const TokenOptions options{.delimiters = " =", .mask_digits = true};
  TokenSymbolizer symbolizer(options);
  LineMemo memo;
  const std::string run = "station=4 kind=frost value=1.25\nstation=9 kind=wind value=3.50\n";
  std::vector<SymbolId> before;
  for (int i = 0; i < 3; ++i) Feed(symbolizer, &memo, run, before);  // store, remember, find
  ASSERT_GT(memo.stats().hits, 0u);

  // The same tokens with other ids: the memo's ids are no longer the table's.
  SymbolizerState reversed = symbolizer.ExportState();
  std::reverse(reversed.keys.begin(), reversed.keys.end());
  ASSERT_TRUE(symbolizer.ImportState(reversed).ok());
  TokenSymbolizer fresh(options);
  ASSERT_TRUE(fresh.ImportState(reversed).ok());
  std::vector<SymbolId> actual;
  std::vector<SymbolId> expected;
  ASSERT_EQ(symbolizer.AppendKnownLines(run, actual, &memo), run.size());
  fresh.AppendKnownLines(run, expected);
  EXPECT_EQ(actual, expected);
  EXPECT_NE(std::vector<SymbolId>(before.begin(), before.begin() + expected.size()), expected);
}

}  // namespace
}  // namespace codedrift
