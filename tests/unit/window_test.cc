#include "codedrift/window.h"

#include <random>

#include <gtest/gtest.h>

namespace codedrift {
namespace {

std::vector<uint64_t> Sum(const WindowCounts& counts, size_t k) {
  std::vector<uint64_t> sum(k, 0);
  for (const auto& batch : counts.batches) {
    for (size_t i = 0; i < batch.size(); ++i) sum[i] += batch[i];
  }
  return sum;
}

// A count window must hold exactly the last N symbols, whatever the push sizes (property test
// against a naive recount of the tail of the whole stream).
TEST(CountWindow, HoldsExactlyTheLastNSymbols) {
  std::mt19937_64 rng(7);
  for (uint64_t capacity : {1u, 5u, 64u, 1000u}) {
    auto bytes = MakeByteCountWindow(capacity);
    auto ids = MakeIdCountWindow(capacity);
    std::vector<uint8_t> stream;
    for (int push = 0; push < 200; ++push) {
      std::vector<uint8_t> chunk(rng() % 300);
      for (auto& c : chunk) c = static_cast<uint8_t>(rng() % 7);
      bytes->PushBytes(chunk);
      std::vector<SymbolId> chunk_ids(chunk.begin(), chunk.end());
      ids->PushIds(chunk_ids);
      stream.insert(stream.end(), chunk.begin(), chunk.end());
      std::vector<uint64_t> expected(7, 0);
      const size_t keep = std::min<size_t>(capacity, stream.size());
      for (size_t i = stream.size() - keep; i < stream.size(); ++i) ++expected[stream[i]];
      EXPECT_EQ(Sum(bytes->Count(16, 7), 7), expected);
      EXPECT_EQ(Sum(ids->Count(3, 7), 7), expected);
      EXPECT_EQ(bytes->size(), keep);
    }
  }
}

TEST(CountWindow, BatchesAreConsecutiveOldestFirst) {
  auto window = MakeIdCountWindow(8);
  const std::vector<SymbolId> symbols = {0, 0, 1, 1, 2, 2, 3, 3, 4, 4};  // 0s fall out
  window->PushIds(symbols);
  const WindowCounts counts = window->Count(4, 5);
  ASSERT_EQ(counts.batches.size(), 4u);
  for (size_t b = 0; b < 4; ++b) {
    EXPECT_EQ(counts.batches[b][b + 1], 2u) << b;
  }
}

TEST(TimeWindow, DropsBucketsOlderThanTheSpan) {
  ManualClock clock;
  auto window = MakeTimeWindow(std::chrono::seconds(10), 5, clock);
  const std::vector<SymbolId> a = {1, 1, 1};
  const std::vector<SymbolId> b = {2};
  window->PushIds(a);
  clock.Advance(std::chrono::seconds(6));
  window->PushIds(b);
  EXPECT_EQ(window->size(), 4u);
  EXPECT_EQ(Sum(window->Clone()->Count(5, 3), 3), (std::vector<uint64_t>{0, 3, 1}));
  clock.Advance(std::chrono::seconds(5));  // the first push is now 11 s old
  auto later = window->Clone();
  EXPECT_EQ(later->size(), 1u);
  EXPECT_EQ(Sum(later->Count(5, 3), 3), (std::vector<uint64_t>{0, 0, 1}));
  clock.Advance(std::chrono::seconds(60));
  EXPECT_EQ(window->Clone()->size(), 0u);
}

// CopyInto gives what Clone gives, into a window of the same spec (a copy made earlier and
// reused, as Model::Sample does), and refuses a window of another kind or size untouched.
TEST(WindowCopyInto, EqualsCloneAndRefusesAnotherSpec) {
  ManualClock clock;
  std::mt19937_64 rng(11);
  struct Made {
    std::unique_ptr<Window> window, copy, other;
  };
  std::vector<Made> kinds;
  kinds.push_back({MakeByteCountWindow(100), MakeByteCountWindow(100), MakeByteCountWindow(99)});
  kinds.push_back({MakeIdCountWindow(100), MakeIdCountWindow(100), MakeByteCountWindow(100)});
  kinds.push_back({MakeTimeWindow(std::chrono::seconds(10), 5, clock),
                   MakeTimeWindow(std::chrono::seconds(10), 5, clock), MakeIdCountWindow(100)});
  for (int round = 0; round < 20; ++round) {
    std::vector<uint8_t> chunk(rng() % 80);
    for (auto& c : chunk) c = static_cast<uint8_t>(rng() % 7);
    const std::vector<SymbolId> ids(chunk.begin(), chunk.end());
    for (size_t k = 0; k < kinds.size(); ++k) {
      Made& made = kinds[k];
      if (k == 0) {
        made.window->PushBytes(chunk);
      } else {
        made.window->PushIds(ids);
      }
      ASSERT_TRUE(made.window->CopyInto(*made.copy)) << k;
      const auto clone = made.window->Clone();
      EXPECT_EQ(made.copy->size(), clone->size()) << k;
      EXPECT_EQ(made.copy->Count(4, 7).batches, clone->Count(4, 7).batches) << k;
      EXPECT_FALSE(made.window->CopyInto(*made.other)) << k;
      EXPECT_EQ(made.other->size(), 0u) << k;
    }
    clock.Advance(std::chrono::seconds(3));  // time-window buckets age between rounds
  }
}

}  // namespace
}  // namespace codedrift
