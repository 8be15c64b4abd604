// Tokens models scan a received run of lines in one pass (newlines end records, "\r\n" ends a
// line like "\n"), where Ingest symbolizes one record at a time. Property test on invented
// lines chosen for the edges of that scan, with the record-by-record model as the oracle.
#include <random>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "codedrift/clock.h"
#include "codedrift/model.h"

namespace codedrift {
namespace {

// Lines with carriage returns in every place (before the newline, doubled, alone, inside a
// token), empty lines, lines of delimiters only, tokens crossing 64-byte steps, and fresh
// tokens so that small tables fill up mid-run.
std::string EdgeLine(std::mt19937_64& rng, int i) {
  static const char* const kPieces[] = {"temp=12", "\r",      " ",  "=",       ",",
                                        "node-7",  "a\rb",    "x",  "0.25",    "status=ok",
                                        "\r\r",    "  ,  = ", "zz", "id-9-9-9"};
  std::string line;
  const int pieces = static_cast<int>(rng() % 9);
  for (int k = 0; k < pieces; ++k) {
    line += kPieces[rng() % (sizeof kPieces / sizeof kPieces[0])];
    if (rng() % 4 == 0) line += " ";
  }
  if (i % 11 == 0) line += " fresh" + std::to_string(i) + " ";
  if (i % 13 == 0) line += std::string(70 + rng() % 60, 'q');  // crosses a 64-byte step
  if (rng() % 3 == 0) line += "\r";
  return line + "\n";
}

TEST(TokenLinesProperty, ARunScannedWholeCountsAsItsLinesOneByOne) {
  for (const uint32_t max_distinct : {3u, 40u, 65536u}) {
    for (const bool mask_digits : {false, true}) {
      SCOPED_TRACE(testing::Message()
                   << "max_distinct " << max_distinct << " mask " << mask_digits);
      SymbolizerSpec spec{.kind = AlphabetKind::kTokens};
      spec.tokens.max_distinct = max_distinct;
      spec.tokens.mask_digits = mask_digits;
      const WindowSpec window{.symbols = 1 << 20};
      ManualClock clock;
      Model one_by_one(spec, window, clock);
      Model by_runs(spec, window, clock);
      std::mt19937_64 rng(max_distinct + (mask_digits ? 1000 : 0));
      int line_number = 0;
      for (int run_number = 0; run_number < 400; ++run_number) {
        const int lines = 1 + static_cast<int>(rng() % 30);
        std::string run;
        for (int k = 0; k < lines; ++k) {
          const std::string line = EdgeLine(rng, line_number++);
          one_by_one.Ingest(line);
          run += line;
        }
        by_runs.IngestRun(run, static_cast<uint64_t>(lines));
      }
      // A last line without its newline is a record too.
      one_by_one.Ingest("tail=1\r");
      by_runs.IngestRun("tail=1\r", 1);
      const ModelSample expected = one_by_one.Sample();
      const ModelSample actual = by_runs.Sample();
      EXPECT_EQ(actual.records_total, expected.records_total);
      EXPECT_EQ(actual.symbols_total, expected.symbols_total);
      ASSERT_EQ(actual.keys, expected.keys);
      EXPECT_EQ(actual.cumulative, expected.cumulative);
      const auto limit = static_cast<SymbolId>(expected.keys.size());
      EXPECT_EQ(actual.window->Count(3, limit).batches, expected.window->Count(3, limit).batches);
    }
  }
}

}  // namespace
}  // namespace codedrift
