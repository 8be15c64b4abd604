// Model::IngestRun: a run of whole lines has the same effect as Ingest on each line in turn,
// for every symbolizer and both window kinds. Property tests on invented telemetry, with the
// record-by-record model as the oracle.
#include <bitset>
#include <random>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "codedrift/clock.h"
#include "codedrift/model.h"

namespace codedrift {
namespace {

// Invented orchard-probe lines, seeded; some empty, some one byte, some long.
std::vector<std::string> ProbeLines(uint64_t seed, int count) {
  std::mt19937_64 rng(seed);
  std::vector<std::string> lines;
  for (int i = 0; i < count; ++i) {
    const int kind = static_cast<int>(rng() % 20);
    std::string line;
    if (kind == 0) {
      line = "";
    } else if (kind == 1) {
      line = "x";
    } else {
      line = "probe=" + std::to_string(rng() % 40) + " moisture=" + std::to_string(rng() % 100) +
             " temp=" + std::to_string(rng() % 30) + (kind == 2 ? std::string(300, 'z') : "");
    }
    lines.push_back(line + "\n");
  }
  return lines;
}

struct Case {
  const char* name;
  SymbolizerSpec symbols;
  WindowSpec window;
};

std::vector<Case> Cases() {
  SymbolizerSpec bytes{.kind = AlphabetKind::kBytes};
  SymbolizerSpec pairs{.kind = AlphabetKind::kBytes, .block = 2};
  SymbolizerSpec tokens{.kind = AlphabetKind::kTokens};
  tokens.tokens.mask_digits = true;
  SymbolizerSpec field{.kind = AlphabetKind::kField};
  field.field.offset_bits = 8;
  field.field.width_bits = 12;
  field.field.transform = FieldTransform::kDelta;
  const WindowSpec count{.symbols = 1000};  // small, so the ring wraps many times
  const WindowSpec time{.span = std::chrono::seconds(60), .buckets = 6};
  return {{"bytes/count", bytes, count}, {"bytes/time", bytes, time},
          {"pairs/count", pairs, count}, {"tokens/count", tokens, count},
          {"tokens/time", tokens, time}, {"field/count", field, count}};
}

TEST(ModelIngestRun, SameSampleAsIngestingEachLine) {
  for (const Case& c : Cases()) {
    SCOPED_TRACE(c.name);
    ManualClock clock;
    Model one_by_one(c.symbols, c.window, clock);
    Model by_runs(c.symbols, c.window, clock);
    std::mt19937_64 rng(7);
    const std::vector<std::string> lines = ProbeLines(11, 3000);
    size_t i = 0;
    while (i < lines.size()) {
      // A run of 1..40 lines, as one received buffer would hold them.
      const size_t n = std::min<size_t>(1 + rng() % 40, lines.size() - i);
      std::string run;
      for (size_t k = i; k < i + n; ++k) {
        one_by_one.Ingest(lines[k]);
        run += lines[k];
      }
      by_runs.IngestRun(run, n);
      i += n;
      clock.Advance(std::chrono::milliseconds(700));  // time windows move between buffers
    }
    const ModelSample expected = one_by_one.Sample();
    const ModelSample actual = by_runs.Sample();
    EXPECT_EQ(actual.records_total, expected.records_total);
    EXPECT_EQ(actual.records_total, lines.size());
    EXPECT_EQ(actual.symbols_total, expected.symbols_total);
    EXPECT_EQ(actual.skipped_records, expected.skipped_records);
    EXPECT_EQ(actual.keys, expected.keys);
    EXPECT_EQ(actual.cumulative, expected.cumulative);
    const auto id_limit = static_cast<SymbolId>(expected.keys.size());
    EXPECT_EQ(actual.window->size(), expected.window->size());
    EXPECT_EQ(actual.window->Count(4, id_limit).batches,
              expected.window->Count(4, id_limit).batches);
  }
}

// CountOnlyBytes: lifetime counts of the selected bytes stay exact through short records
// (counted under the model's lock) and long runs (counted outside it); the other bytes stop
// where they were, while the window and totals still see every byte.
TEST(ModelIngestRun, CountOnlyBytesKeepsExactCountsOfTheSelectedBytes) {
  ManualClock clock;
  Model model(SymbolizerSpec{.kind = AlphabetKind::kBytes}, WindowSpec{.symbols = 1 << 20}, clock);
  const std::vector<std::string> lines = ProbeLines(21, 4000);
  std::vector<uint64_t> expected(256, 0);
  const auto ingest = [&](size_t from, size_t to, const std::bitset<256>& counted) {
    std::string run;
    for (size_t k = from; k < to; ++k) {
      run += lines[k];
      for (unsigned char c : lines[k]) expected[c] += counted[c] ? 1 : 0;
    }
    if (to - from == 1) {
      model.Ingest(run);
    } else {
      model.IngestRun(run, to - from);
    }
  };
  std::bitset<256> all;
  all.set();
  ingest(0, 1000, all);  // the default: every byte
  std::bitset<256> digits_and_z;
  for (char c : std::string("0123456789z")) digits_and_z.set(static_cast<unsigned char>(c));
  model.CountOnlyBytes(ByteSelection(digits_and_z));
  ingest(1000, 3000, digits_and_z);                                     // one long run
  for (size_t k = 3000; k < 3100; ++k) ingest(k, k + 1, digits_and_z);  // short records
  for (size_t k = 3100; k < 4000; k += 3) ingest(k, std::min<size_t>(k + 3, 4000), digits_and_z);

  const ModelSample sample = model.Sample();
  EXPECT_EQ(sample.cumulative, expected);
  EXPECT_EQ(sample.records_total, lines.size());
  uint64_t bytes = 0;
  for (const std::string& line : lines) bytes += line.size();
  EXPECT_EQ(sample.symbols_total, bytes);
  EXPECT_EQ(sample.window->size(), bytes);
}

}  // namespace
}  // namespace codedrift
