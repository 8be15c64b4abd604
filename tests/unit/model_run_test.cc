// Model::IngestRun: a run of whole lines has the same effect as Ingest on each line in turn,
// for every symbolizer and both window kinds. Property tests on invented telemetry, with the
// record-by-record model as the oracle.
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

}  // namespace
}  // namespace codedrift
