// max_distinct for wide fields and byte blocks of 3..4: the first max_distinct distinct values
// keep the ids they would have without a cap, every later new value shares the overflow id
// max_distinct (key ""), and checkpoints carry the table and refuse more than the cap. Record
// contents are invented (property tests).
#include <cstdint>
#include <random>
#include <set>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "codedrift/alphabet.h"
#include "codedrift/clock.h"
#include "codedrift/model.h"
#include "codedrift/symbolizer.h"

namespace codedrift {
namespace {

using Ids = std::vector<SymbolId>;

constexpr uint32_t kUncapped = UINT32_MAX;

// A record whose first four bytes are `value`, big-endian.
std::string Packet(uint32_t value) {
  std::string out(4, '\0');
  for (int i = 3; i >= 0; --i, value >>= 8) out[static_cast<size_t>(i)] = static_cast<char>(value);
  return out;
}

FieldOptions Wide(uint32_t max_distinct, int width_bits = 32) {
  FieldOptions options;
  options.width_bits = width_bits;
  options.max_distinct = max_distinct;
  return options;
}

Ids FieldIds(Symbolizer& symbolizer, const std::vector<uint32_t>& values) {
  Ids ids;
  for (const uint32_t value : values) symbolizer.Append(Packet(value), ids);
  return ids;
}

TEST(FieldCap, ValuesAfterTheCapShareTheOverflowId) {
  auto field = MakeFieldSymbolizer(Wide(3));
  ASSERT_NE(field, nullptr);
  EXPECT_EQ(FieldIds(*field, {10, 20, 10}), (Ids{0, 1, 0}));
  EXPECT_EQ(field->IdLimit(), 2u);  // not full: no overflow id yet
  EXPECT_EQ(FieldIds(*field, {30}), (Ids{2}));
  EXPECT_EQ(field->IdLimit(), 4u);  // full: the overflow id 3 may come any moment
  // 40 and 50 arrive when the table is full; the kept values keep their ids.
  EXPECT_EQ(FieldIds(*field, {40, 50, 20, 40, 30}), (Ids{3, 3, 1, 3, 2}));
  EXPECT_EQ(field->IdLimit(), 4u);
  EXPECT_EQ(field->KeyOf(3), SymbolKey(kOverflowToken));
  EXPECT_EQ(field->KeyOf(0), FieldKey(10));
  EXPECT_EQ(field->KeyOf(2), FieldKey(30));
}

TEST(FieldCap, DirectFieldsHaveNoCap) {
  // 16 bits and narrower: the id is the value whatever max_distinct says.
  auto field = MakeFieldSymbolizer(Wide(1, 16));
  ASSERT_NE(field, nullptr);
  Ids ids;
  field->Append(std::string("\x12\x34", 2), ids);
  field->Append(std::string("\xab\xcd", 2), ids);
  EXPECT_EQ(ids, (Ids{0x1234, 0xabcd}));
  EXPECT_EQ(field->IdLimit(), 65536u);
  EXPECT_EQ(field->KeyOf(0xabcd), FieldKey(0xabcd));
}

TEST(FieldCap, CheckpointRoundTripKeepsIdsAndTheOverflow) {
  auto written = MakeFieldSymbolizer(Wide(3));
  FieldIds(*written, {7, 8, 9, 10});  // 10 overflows
  const SymbolizerState state = written->ExportState();
  EXPECT_EQ(state.keys, (std::vector<SymbolKey>{FieldKey(7), FieldKey(8), FieldKey(9)}));

  auto restored = MakeFieldSymbolizer(Wide(3));
  ASSERT_TRUE(restored->ImportState(state).ok());
  EXPECT_EQ(restored->IdLimit(), written->IdLimit());
  EXPECT_EQ(FieldIds(*restored, {9, 7, 10, 11, 8}), (Ids{2, 0, 3, 3, 1}));
  EXPECT_EQ(restored->KeyOf(3), SymbolKey(kOverflowToken));

  // A larger cap takes the same keys and has room left.
  auto roomier = MakeFieldSymbolizer(Wide(5));
  ASSERT_TRUE(roomier->ImportState(state).ok());
  EXPECT_EQ(FieldIds(*roomier, {11, 12, 13}), (Ids{3, 4, 5}));
}

TEST(FieldCap, CheckpointWithMoreValuesThanTheCapIsRefused) {
  auto written = MakeFieldSymbolizer(Wide(4));
  FieldIds(*written, {1, 2, 3, 4});
  auto smaller = MakeFieldSymbolizer(Wide(3));
  const Status refused = smaller->ImportState(written->ExportState());
  ASSERT_FALSE(refused.ok());
  EXPECT_EQ(refused.error().message, "checkpoint holds more field values than max_distinct");
  // Refused: the symbolizer is still empty and numbers from 0.
  EXPECT_EQ(FieldIds(*smaller, {4}), (Ids{0}));

  // The overflow key is never a stored value.
  SymbolizerState with_overflow;
  with_overflow.keys = {FieldKey(1), SymbolKey(kOverflowToken)};
  EXPECT_FALSE(MakeFieldSymbolizer(Wide(3))->ImportState(with_overflow).ok());
}

TEST(BlockCap, BlocksAfterTheCapShareTheOverflowId) {
  auto blocks = MakeBytesSymbolizer(3, BytesOptions{.max_distinct = 2});
  ASSERT_NE(blocks, nullptr);
  Ids ids;
  // Blocks "abc", "def", "abc", "ghi", "def", "jkl"; the record cut mid-block carries over.
  blocks->Append("abcdefa", ids);
  blocks->Append("bcghidefjkl", ids);
  EXPECT_EQ(ids, (Ids{0, 1, 0, 2, 1, 2}));
  EXPECT_EQ(blocks->IdLimit(), 3u);
  EXPECT_EQ(blocks->KeyOf(2), SymbolKey(kOverflowToken));
  EXPECT_EQ(blocks->KeyOf(1), "def");
  EXPECT_EQ(Alphabet::Bytes(3).FormatKey(blocks->KeyOf(0)), "0x616263");
}

TEST(BlockCap, FourByteBlocksAreCappedTwoByteBlocksAreNot) {
  auto four = MakeBytesSymbolizer(4, BytesOptions{.max_distinct = 1});
  Ids ids;
  four->Append("aaaabbbbaaaacccc", ids);
  EXPECT_EQ(ids, (Ids{0, 1, 0, 1}));
  EXPECT_EQ(four->KeyOf(1), SymbolKey(kOverflowToken));

  // Blocks of 2 have at most 65536 values: every one gets an id of its own.
  auto two = MakeBytesSymbolizer(2, BytesOptions{.max_distinct = 1});
  ids.clear();
  two->Append("aabbccaa", ids);
  EXPECT_EQ(ids, (Ids{0, 1, 2, 0}));
  EXPECT_EQ(two->IdLimit(), 3u);
}

TEST(BlockCap, CheckpointRoundTripAndRefusal) {
  auto written = MakeBytesSymbolizer(3, BytesOptions{.max_distinct = 2});
  Ids ids;
  written->Append("xyzuvwrstxy", ids);  // rst overflows; "xy" stays open
  const SymbolizerState state = written->ExportState();
  EXPECT_EQ(state.keys, (std::vector<SymbolKey>{"xyz", "uvw"}));
  EXPECT_EQ(state.carry_bytes, 2u);

  auto restored = MakeBytesSymbolizer(3, BytesOptions{.max_distinct = 2});
  ASSERT_TRUE(restored->ImportState(state).ok());
  ids.clear();
  restored->Append("zuvwqqq", ids);  // the open "xy" completes as "xyz"
  EXPECT_EQ(ids, (Ids{0, 1, 2}));

  auto smaller = MakeBytesSymbolizer(3, BytesOptions{.max_distinct = 1});
  const Status refused = smaller->ImportState(state);
  ASSERT_FALSE(refused.ok());
  EXPECT_EQ(refused.error().message, "checkpoint holds more blocks than max_distinct");
}

// The property behind "ids before the cap unchanged": for any input, the capped stream is the
// uncapped stream with every id >= cap replaced by the overflow id cap.
Ids Capped(const Ids& uncapped, uint32_t cap) {
  Ids out = uncapped;
  for (SymbolId& id : out) id = id >= cap ? cap : id;
  return out;
}

TEST(CapProperty, FieldStreamIsTheUncappedStreamWithLateIdsMerged) {
  for (uint64_t seed = 1; seed <= 20; ++seed) {
    std::mt19937_64 rng(seed);
    const uint32_t cap = 1 + static_cast<uint32_t>(rng() % 64);
    // Values from a pool about twice the cap, so old values recur after the table fills.
    const uint64_t pool = 2 * cap + rng() % 16;
    const auto transform = static_cast<FieldTransform>(rng() % 3);
    const int width = 17 + static_cast<int>(rng() % 16);
    FieldOptions capped_options = Wide(cap, width);
    capped_options.transform = transform;
    FieldOptions uncapped_options = capped_options;
    uncapped_options.max_distinct = kUncapped;
    auto capped = MakeFieldSymbolizer(capped_options);
    auto uncapped = MakeFieldSymbolizer(uncapped_options);
    Ids capped_ids, uncapped_ids;
    for (int i = 0; i < 2000; ++i) {
      const auto value = static_cast<uint32_t>((rng() % pool) * 2654435761u);
      capped->Append(Packet(value), capped_ids);
      uncapped->Append(Packet(value), uncapped_ids);
    }
    ASSERT_EQ(capped_ids, Capped(uncapped_ids, cap)) << "seed " << seed;
    for (SymbolId id = 0; id < capped->IdLimit(); ++id) {
      EXPECT_EQ(capped->KeyOf(id), id < cap ? uncapped->KeyOf(id) : SymbolKey(kOverflowToken));
    }
  }
}

TEST(CapProperty, BlockStreamIsTheUncappedStreamWithLateIdsMerged) {
  for (uint64_t seed = 1; seed <= 20; ++seed) {
    std::mt19937_64 rng(seed);
    const int block = 3 + static_cast<int>(rng() % 2);
    const uint32_t cap = 1 + static_cast<uint32_t>(rng() % 64);
    auto capped = MakeBytesSymbolizer(block, BytesOptions{.max_distinct = cap});
    auto uncapped = MakeBytesSymbolizer(block);  // keeps every block
    Ids capped_ids, uncapped_ids;
    for (int i = 0; i < 500; ++i) {
      // Records of 0..9 bytes from a 3-letter alphabet: blocks recur and straddle records.
      std::string record(rng() % 10, 'a');
      for (char& c : record) c = static_cast<char>('a' + rng() % 3);
      capped->Append(record, capped_ids);
      uncapped->Append(record, uncapped_ids);
    }
    ASSERT_EQ(capped_ids, Capped(uncapped_ids, cap)) << "seed " << seed;
  }
}

SymbolizerSpec WideFieldSpec(uint32_t max_distinct) {
  SymbolizerSpec spec;
  spec.kind = AlphabetKind::kField;
  spec.field = Wide(max_distinct);
  return spec;
}

// The model's per-id arrays and keys stay at cap + 1 however many values arrive.
TEST(CapModel, SampleHoldsAtMostCapPlusOverflowKeys) {
  ManualClock clock;
  Model model(WideFieldSpec(16), WindowSpec{.symbols = 1000}, clock);
  std::mt19937_64 rng(7);
  std::set<uint32_t> kept;  // the first 16 distinct values
  uint64_t overflowed = 0;
  for (int i = 0; i < 5000; ++i) {
    const auto value = static_cast<uint32_t>(rng());
    if (kept.size() < 16) kept.insert(value);
    overflowed += kept.contains(value) ? 0 : 1;
    model.Ingest(Packet(value));
  }
  const ModelSample sample = model.Sample();
  ASSERT_EQ(sample.keys.size(), 17u);
  EXPECT_EQ(sample.keys[16], SymbolKey(kOverflowToken));
  ASSERT_EQ(sample.cumulative.size(), 17u);
  uint64_t total = 0;
  for (const uint64_t count : sample.cumulative) total += count;
  EXPECT_EQ(total, 5000u);
  EXPECT_EQ(sample.cumulative[16], overflowed);
  EXPECT_EQ(sample.window->size(), 1000u);
}

TEST(CapModel, CheckpointIsRefusedWhenTheCapChanged) {
  ManualClock clock;
  Model written(WideFieldSpec(4), WindowSpec{.symbols = 100}, clock);
  for (uint32_t v = 0; v < 10; ++v) written.Ingest(Packet(v * 1000003u));
  const ModelState state = written.ExportState();

  Model same(WideFieldSpec(4), WindowSpec{.symbols = 100}, clock);
  ASSERT_TRUE(same.ImportState(state).ok());
  EXPECT_EQ(same.Sample().keys, written.Sample().keys);
  // More room: the saved overflow id 4 would mean the next new value; refused, not misread.
  Model larger(WideFieldSpec(8), WindowSpec{.symbols = 100}, clock);
  EXPECT_FALSE(larger.ImportState(state).ok());
  Model smaller(WideFieldSpec(2), WindowSpec{.symbols = 100}, clock);
  EXPECT_FALSE(smaller.ImportState(state).ok());
}

// A reload compares specs to decide whether a model keeps its counts: a new cap starts afresh.
TEST(CapModel, SpecsDifferByTheirCap) {
  EXPECT_EQ(WideFieldSpec(4), WideFieldSpec(4));
  EXPECT_FALSE(WideFieldSpec(4) == WideFieldSpec(8));
  SymbolizerSpec blocks;
  blocks.kind = AlphabetKind::kBytes;
  blocks.block = 3;
  SymbolizerSpec roomier = blocks;
  roomier.bytes.max_distinct = blocks.bytes.max_distinct + 1;
  EXPECT_FALSE(blocks == roomier);
}

}  // namespace
}  // namespace codedrift
