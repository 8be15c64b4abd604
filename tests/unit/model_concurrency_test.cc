// Model ingestion from several threads at once (the daemon's io threads feeding one model):
// single bytes are counted and tokens symbolized outside the model's lock, and the result must
// be what one thread ingesting the same records in some order gives. Property tests on
// invented seeded telemetry, with a plain count of the records as the oracle.
#include <atomic>
#include <bitset>
#include <map>
#include <random>
#include <string>
#include <thread>
#include <vector>

#include <gtest/gtest.h>

#include "codedrift/clock.h"
#include "codedrift/model.h"

namespace codedrift {
namespace {

constexpr int kThreads = 4;
constexpr WindowSpec kBigWindow{.symbols = uint64_t{1} << 22};  // holds every symbol sent

// Invented vineyard-sensor lines; `fresh` of them carry a token seen nowhere else.
std::vector<std::string> SensorLines(uint64_t seed, int count, int fresh_every) {
  std::mt19937_64 rng(seed);
  std::vector<std::string> lines;
  for (int i = 0; i < count; ++i) {
    std::string line = "row=" + std::to_string(rng() % 30) + " vine=" + std::to_string(rng() % 7) +
                       " brix=" + std::to_string(rng() % 25) + " ok";
    if (fresh_every > 0 && i % fresh_every == 0) {
      line += " id" + std::to_string(seed) + "x" + std::to_string(i);
    }
    if (i % 9 == 0) line += std::string(400, 'p');  // some long lines: runs above 2 KiB
    lines.push_back(line + "\n");
  }
  return lines;
}

// Ingests each thread's lines in runs of 1..30 lines (and every 7th run line by line, the
// per-record path) from kThreads threads at once, with a sampler running beside them.
void IngestConcurrently(Model& model, const std::vector<std::vector<std::string>>& per_thread) {
  std::vector<std::thread> threads;
  for (size_t t = 0; t < per_thread.size(); ++t) {
    threads.emplace_back([&model, &lines = per_thread[t], t] {
      std::mt19937_64 rng(t);
      size_t i = 0;
      for (int run_number = 0; i < lines.size(); ++run_number) {
        const size_t n = std::min<size_t>(1 + rng() % 30, lines.size() - i);
        if (run_number % 7 == 0) {
          for (size_t k = i; k < i + n; ++k) model.Ingest(lines[k]);
        } else {
          std::string run;
          for (size_t k = i; k < i + n; ++k) run += lines[k];
          model.IngestRun(run, n);
        }
        i += n;
      }
    });
  }
  std::thread sampler([&model] {
    uint64_t last = 0;
    for (int i = 0; i < 50; ++i) {
      const ModelSample sample = model.Sample();
      EXPECT_GE(sample.symbols_total, last);  // totals only grow
      EXPECT_LE(sample.window->size(), sample.symbols_total);
      last = sample.symbols_total;
    }
  });
  for (std::thread& thread : threads) thread.join();
  sampler.join();
}

// Counts by key, of the cumulative counters and of the (big enough) window.
std::map<SymbolKey, uint64_t> ByKey(const ModelSample& sample, bool window) {
  const auto limit = static_cast<SymbolId>(sample.keys.size());
  std::vector<uint64_t> counts = sample.cumulative;
  if (window) counts = sample.window->Count(1, limit).batches.at(0);
  std::map<SymbolKey, uint64_t> out;
  for (size_t id = 0; id < counts.size(); ++id) {
    if (counts[id] != 0) out[sample.keys.at(id)] += counts[id];
  }
  return out;
}

std::map<SymbolKey, uint64_t> OneThread(const SymbolizerSpec& spec,
                                        const std::vector<std::vector<std::string>>& lines) {
  ManualClock clock;
  Model model(spec, kBigWindow, clock);
  for (const auto& part : lines) {
    for (const std::string& line : part) model.Ingest(line);
  }
  return ByKey(model.Sample(), false);
}

TEST(ModelConcurrencyProperty, TokensFromFourThreadsCountAsOneThreadDoes) {
  // With room for every token, ids depend on arrival order but counts by token do not.
  for (const bool mask_digits : {false, true}) {
    SCOPED_TRACE(mask_digits ? "masked" : "unmasked");
    SymbolizerSpec spec{.kind = AlphabetKind::kTokens};
    spec.tokens.mask_digits = mask_digits;
    std::vector<std::vector<std::string>> lines;
    uint64_t records = 0;
    for (int t = 0; t < kThreads; ++t) {
      lines.push_back(SensorLines(100 + t, 3000, 5));
      records += lines.back().size();
    }
    ManualClock clock;
    Model model(spec, kBigWindow, clock);
    IngestConcurrently(model, lines);
    const ModelSample sample = model.Sample();
    EXPECT_EQ(sample.records_total, records);
    const auto expected = OneThread(spec, lines);
    EXPECT_EQ(ByKey(sample, false), expected);
    EXPECT_EQ(ByKey(sample, true), expected);
    // Keys are distinct: one id per token.
    std::map<SymbolKey, int> seen;
    for (const SymbolKey& key : sample.keys) EXPECT_EQ(++seen[key], 1) << key;
  }
}

TEST(ModelConcurrencyProperty, TokensBeyondMaxDistinctAreOverflowWhicheverArrivedFirst) {
  // Which tokens fill the table depends on arrival order; what holds for every order: at
  // most max_distinct tokens have ids, no token is counted more often than it occurs, the
  // overflow symbol takes exactly the occurrences the kept tokens do not, and every record
  // ends with one end-of-record symbol.
  SymbolizerSpec spec{.kind = AlphabetKind::kTokens};
  spec.tokens.max_distinct = 200;
  std::vector<std::vector<std::string>> lines;
  uint64_t records = 0;
  for (int t = 0; t < kThreads; ++t) {
    lines.push_back(SensorLines(200 + t, 2000, 2));
    records += lines.back().size();
  }
  const auto occurrences = [&] {
    SymbolizerSpec roomy = spec;
    roomy.tokens.max_distinct = 1 << 20;
    return OneThread(roomy, lines);
  }();
  ManualClock clock;
  Model model(spec, kBigWindow, clock);
  IngestConcurrently(model, lines);
  const ModelSample sample = model.Sample();
  const auto counted = ByKey(sample, false);
  EXPECT_EQ(sample.keys.size(), 2u + spec.tokens.max_distinct);
  uint64_t kept = 0;
  uint64_t tokens = 0;
  for (const auto& [key, count] : occurrences) {
    if (key != kEndOfRecordToken) tokens += count;
  }
  for (const auto& [key, count] : counted) {
    if (key == kOverflowToken) continue;
    if (key == kEndOfRecordToken) {
      EXPECT_EQ(count, records);
      continue;
    }
    EXPECT_EQ(count, occurrences.at(key)) << key;  // a kept token is counted every time
    kept += count;
  }
  EXPECT_EQ(counted.at(SymbolKey(kOverflowToken)), tokens - kept);
  EXPECT_EQ(ByKey(sample, true), counted);
}

// Each thread's lines, and the bytes of them all by value and in total.
struct ThreadTraffic {
  std::vector<std::vector<std::string>> lines;
  std::vector<uint64_t> histogram = std::vector<uint64_t>(256, 0);
  uint64_t bytes = 0;
};

ThreadTraffic TrafficOfThreads(uint64_t first_seed) {
  ThreadTraffic traffic;
  for (int t = 0; t < kThreads; ++t) {
    traffic.lines.push_back(SensorLines(first_seed + static_cast<uint64_t>(t), 3000, 0));
    for (const std::string& line : traffic.lines.back()) {
      for (const unsigned char c : line) ++traffic.histogram[c];
      traffic.bytes += line.size();
    }
  }
  return traffic;
}

TEST(ModelConcurrencyProperty, BytesFromFourThreadsCountEveryByte) {
  SymbolizerSpec spec{.kind = AlphabetKind::kBytes};
  const ThreadTraffic traffic = TrafficOfThreads(300);
  const auto& [lines, histogram, bytes] = traffic;
  ManualClock clock;
  Model model(spec, kBigWindow, clock);
  IngestConcurrently(model, lines);
  const ModelSample sample = model.Sample();
  EXPECT_EQ(sample.symbols_total, bytes);
  ASSERT_EQ(sample.cumulative.size(), 256u);
  const std::vector<uint64_t> window = sample.window->Count(1, 256).batches.at(0);
  for (int b = 0; b < 256; ++b) {
    EXPECT_EQ(sample.cumulative[static_cast<size_t>(b)], histogram[static_cast<size_t>(b)]) << b;
    EXPECT_EQ(window[static_cast<size_t>(b)], histogram[static_cast<size_t>(b)]) << b;
  }
}

// The counted bytes change (as at a table reload) while four threads ingest: the bytes in
// every selection used keep exact lifetime counts, the others never count more than arrived,
// and the window and totals see every byte.
TEST(ModelConcurrencyProperty, CountedBytesChangingDuringIngestKeepTheCommonOnesExact) {
  const ThreadTraffic traffic = TrafficOfThreads(400);
  const auto& [lines, histogram, bytes] = traffic;
  std::bitset<256> digits_and_early;  // digits in both selections, letters in one each
  std::bitset<256> digits_and_late;
  for (int c = '0'; c <= '9'; ++c) {
    digits_and_early.set(static_cast<size_t>(c));
    digits_and_late.set(static_cast<size_t>(c));
  }
  for (int c = 'a'; c <= 'm'; ++c) digits_and_early.set(static_cast<size_t>(c));
  for (int c = 'n'; c <= 'z'; ++c) digits_and_late.set(static_cast<size_t>(c));
  ManualClock clock;
  Model model(SymbolizerSpec{.kind = AlphabetKind::kBytes}, kBigWindow, clock);
  model.CountOnlyBytes(ByteSelection(digits_and_early));
  std::atomic<bool> done{false};
  std::thread reloads([&] {
    for (int i = 0; !done; ++i) {
      model.CountOnlyBytes(ByteSelection(i % 2 == 0 ? digits_and_late : digits_and_early));
    }
  });
  IngestConcurrently(model, lines);
  done = true;
  reloads.join();
  const ModelSample sample = model.Sample();
  EXPECT_EQ(sample.symbols_total, bytes);
  const std::vector<uint64_t> window = sample.window->Count(1, 256).batches.at(0);
  for (int b = 0; b < 256; ++b) {
    const auto i = static_cast<size_t>(b);
    EXPECT_EQ(window[i], histogram[static_cast<size_t>(b)]) << b;
    if (b >= '0' && b <= '9') {
      EXPECT_EQ(sample.cumulative[i], histogram[static_cast<size_t>(b)]) << b;
    } else {
      EXPECT_LE(sample.cumulative[i], histogram[static_cast<size_t>(b)]) << b;
    }
  }
}

}  // namespace
}  // namespace codedrift
