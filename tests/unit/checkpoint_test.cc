#include "codedrift/checkpoint.h"

#include <filesystem>
#include <fstream>
#include <random>
#include <sstream>

#include <gtest/gtest.h>

#include "codedrift/code_table.h"

#include <unistd.h>

namespace codedrift {
namespace {

namespace fs = std::filesystem;

// Invented telemetry records (property tests): key=value lines, some digits, some odd lengths
// so byte blocks stay open across records, binary bytes for fields.
std::vector<std::string> Records(uint64_t seed, int count) {
  std::mt19937_64 rng(seed);
  std::vector<std::string> out;
  for (int i = 0; i < count; ++i) {
    std::string r = "node=" + std::to_string(rng() % 9) + " rssi=-" + std::to_string(rng() % 90);
    if (rng() % 3 == 0)
      r += " fault=" + std::string(1 + rng() % 3, static_cast<char>('a' + rng() % 4));
    r += static_cast<char>(rng() % 256);
    r += '\n';
    out.push_back(r);
  }
  return out;
}

void Feed(Model& model, const std::vector<std::string>& records) {
  for (const auto& r : records) model.Ingest(r);
}

// Everything a sample shows, counted: keys, the window by batches, counters.
void ExpectSameSamples(Model& a, Model& b) {
  const ModelSample x = a.Sample();
  const ModelSample y = b.Sample();
  ASSERT_EQ(x.keys, y.keys);
  const auto limit = static_cast<SymbolId>(x.keys.size());
  EXPECT_EQ(x.window->Count(16, limit).batches, y.window->Count(16, limit).batches);
  EXPECT_EQ(x.window->size(), y.window->size());
  EXPECT_EQ(x.cumulative, y.cumulative);
  EXPECT_EQ(x.symbols_total, y.symbols_total);
  EXPECT_EQ(x.records_total, y.records_total);
  EXPECT_EQ(x.skipped_records, y.skipped_records);
}

SymbolizerSpec Tokens(bool mask_digits, uint32_t max_distinct = 65536) {
  SymbolizerSpec spec;
  spec.kind = AlphabetKind::kTokens;
  spec.tokens.mask_digits = mask_digits;
  spec.tokens.max_distinct = max_distinct;
  return spec;
}

SymbolizerSpec Bytes(int block) {
  SymbolizerSpec spec;
  spec.block = block;
  return spec;
}

SymbolizerSpec Field(uint32_t offset, int width, FieldOrder order, FieldTransform transform) {
  SymbolizerSpec spec;
  spec.kind = AlphabetKind::kField;
  spec.field = FieldOptions{offset, width, order, transform};
  return spec;
}

std::vector<SymbolizerSpec> EverySymbolizerKind() {
  return {Bytes(1),
          Bytes(2),
          Bytes(3),
          Tokens(false),
          Tokens(true),
          Tokens(false, 5),  // overflows: later tokens share the overflow id
          Field(4, 12, FieldOrder::kBig, FieldTransform::kDelta),
          Field(8, 24, FieldOrder::kLittle, FieldTransform::kXor)};
}

// Saves a model through the whole format (payload and file framing) and restores it.
ModelCheckpoint ThroughTheFormat(const ModelCheckpoint& checkpoint) {
  auto payload = DecodeCheckpointFile(EncodeCheckpointFile(EncodeModelCheckpoint(checkpoint)));
  EXPECT_TRUE(payload.ok()) << payload.error().message;
  auto decoded = DecodeModelCheckpoint(payload.value());
  EXPECT_TRUE(decoded.ok()) << decoded.error().message;
  return decoded.value();
}

// Restored models equal the original now and keep equal on further records: ids, open
// blocks, previous field values and token numbering all survive.
TEST(CheckpointModel, EverySymbolizerAndWindowKindRoundTrips) {
  ManualClock clock;
  const std::vector<WindowSpec> windows = {
      WindowSpec{.symbols = 700}, WindowSpec{.span = std::chrono::seconds(10), .buckets = 5}};
  for (const SymbolizerSpec& spec : EverySymbolizerKind()) {
    for (const WindowSpec& window : windows) {
      SCOPED_TRACE(spec.alphabet().ToString() + (window.by_time() ? " time" : " count"));
      Model original(spec, window, clock);
      Feed(original, Records(1, 150));
      clock.Advance(std::chrono::seconds(3));
      Feed(original, Records(2, 150));
      ModelCheckpoint checkpoint;
      checkpoint.model = original.ExportState();
      const ModelCheckpoint decoded = ThroughTheFormat(checkpoint);
      Model restored(spec, window, clock);
      const Status imported = restored.ImportState(decoded.model);
      ASSERT_TRUE(imported.ok()) << imported.error().message;
      ExpectSameSamples(original, restored);
      const auto more = Records(3, 80);
      Feed(original, more);
      Feed(restored, more);
      ExpectSameSamples(original, restored);
    }
  }
}

// A time window restored later holds only what is still inside its span on the new clock.
TEST(CheckpointModel, TimeWindowRestoredAcrossClocksDropsExpiredBuckets) {
  ManualClock writer;  // starts at 1 s
  const WindowSpec window{.span = std::chrono::seconds(10), .buckets = 5};
  Model original(Bytes(1), window, writer);
  original.Ingest("aaaa");  // in the bucket [0 s, 2 s)
  writer.Advance(std::chrono::seconds(6));
  original.Ingest("bb");  // in the bucket [6 s, 8 s)
  ModelCheckpoint checkpoint;
  checkpoint.model = original.ExportState();
  checkpoint.written = {.unix_ns = 100'000'000'000, .steady_ns = writer.Now().count()};

  // The reader's steady clock has another origin; 5 s of wall time passed since the write,
  // so "aaaa" is 11-12 s old (gone) and "bb" 5-7 s old (kept).
  ManualClock reader;
  reader.Advance(std::chrono::seconds(500));
  const CheckpointTime now{.unix_ns = 105'000'000'000, .steady_ns = reader.Now().count()};
  ShiftSteadyTimes(checkpoint, SteadyShift(checkpoint.written, now));
  Model restored(Bytes(1), window, reader);
  ASSERT_TRUE(restored.ImportState(checkpoint.model).ok());
  const ModelSample sample = restored.Sample();
  EXPECT_EQ(sample.window->size(), 2u);
  EXPECT_EQ(sample.cumulative['a'], 4u);  // totals keep everything ever seen
  EXPECT_EQ(sample.symbols_total, 6u);
}

TEST(CheckpointTime, ShiftCarriesElapsedWallTimeOverToTheNewSteadyClock) {
  // Written at wall 100 s, steady 50 s; read at wall 130 s, steady 10 s. The write was 30 s
  // ago, at steady -20 s on the reader's clock: a writer time of 45 s maps to -25 s.
  const CheckpointTime written{.unix_ns = 100'000'000'000, .steady_ns = 50'000'000'000};
  const CheckpointTime now{.unix_ns = 130'000'000'000, .steady_ns = 10'000'000'000};
  EXPECT_EQ(std::chrono::seconds(45) + SteadyShift(written, now), std::chrono::seconds(-25));
  // A wall clock that went back counts as no time elapsed.
  const CheckpointTime earlier{.unix_ns = 90'000'000'000, .steady_ns = 10'000'000'000};
  EXPECT_EQ(std::chrono::seconds(50) + SteadyShift(written, earlier), std::chrono::seconds(10));
}

TEST(CheckpointModel, RefusedStatesLeaveTheModelAsItWas) {
  ManualClock clock;
  Model tokens(Tokens(false, 3), WindowSpec{.symbols = 10}, clock);
  tokens.Ingest("x y\n");
  ModelState too_many;
  too_many.symbolizer.keys = {"a", "b", "c", "d"};  // max_distinct 3
  EXPECT_FALSE(tokens.ImportState(too_many).ok());
  ModelState twice;
  twice.symbolizer.keys = {"a", "a"};
  EXPECT_FALSE(tokens.ImportState(twice).ok());
  ModelState beyond;
  beyond.symbolizer.keys = {"a"};  // ids 0, 1 reserved, 2 = "a": id 3 does not exist
  beyond.window.kind = WindowStateKind::kIdRing;
  beyond.window.ids = {2, 3};
  EXPECT_FALSE(tokens.ImportState(beyond).ok());
  ModelState oversized;
  oversized.window.kind = WindowStateKind::kIdRing;
  oversized.window.ids.assign(11, 0);  // window of 10
  EXPECT_FALSE(tokens.ImportState(oversized).ok());
  ModelState other_kind;
  other_kind.window.kind = WindowStateKind::kBuckets;
  EXPECT_FALSE(tokens.ImportState(other_kind).ok());
  const ModelSample sample = tokens.Sample();
  EXPECT_EQ(sample.keys, (std::vector<SymbolKey>{"\n", "", "x", "y"}));
  EXPECT_EQ(sample.window->size(), 3u);

  Model blocks(Bytes(2), WindowSpec{.symbols = 10}, clock);
  ModelState wrong_size;
  wrong_size.symbolizer.keys = {"abc"};
  EXPECT_FALSE(blocks.ImportState(wrong_size).ok());
  Model field(Field(0, 4, FieldOrder::kBig, FieldTransform::kDelta), WindowSpec{.symbols = 4},
              clock);
  ModelState wide_previous;
  wide_previous.symbolizer.carry = 16;  // a 4-bit field never held 16
  wide_previous.window.kind = WindowStateKind::kIdRing;
  EXPECT_FALSE(field.ImportState(wide_previous).ok());
}

// Evaluator, code state and history come back as they were, with times moved by the shift.
TEST(CheckpointModel, EvaluatorCodeStateAndHistoryRoundTrip) {
  ManualClock clock;
  Model model(Bytes(1), WindowSpec{.symbols = 4000}, clock);
  Feed(model, Records(4, 200));
  SymbolCounts training(Alphabet::Bytes());
  for (char c : std::string("node= rssi-0123456789\n")) training.Add(SymbolKey(1, c));
  auto table = TrainPrefixTable(training, 15, 8);
  ASSERT_TRUE(table.ok());
  ModelEvaluator evaluator({});
  (void)evaluator.Evaluate(model.Sample(), &table.value());

  CodeStateMachine machine(CodeStateRule{});
  machine.Restore(CodeState::kDrifting, std::chrono::seconds(40), std::chrono::seconds(30),
                  std::chrono::seconds(7), 3);
  History history(2, 2, 2);
  for (int i = 0; i < 7; ++i) {
    history.Add(HistoryPoint{.unix_seconds = 1000.0 + i,
                             .entropy_bits = 0.5 * i,
                             .saving_ratio = i % 2 ? std::optional<double>(0.01 * i) : std::nullopt,
                             .state = i % 3});
  }
  ModelCheckpoint checkpoint{.identity = "x",
                             .model = model.ExportState(),
                             .evaluator = evaluator.ExportState(),
                             .code_state = SnapshotOf(machine),
                             .state_since_unix = 1234.5,
                             .latest_proposal = "p/q.table",
                             .history = history.ExportState()};
  ModelCheckpoint decoded = ThroughTheFormat(checkpoint);
  ShiftSteadyTimes(decoded, std::chrono::seconds(100));

  CodeStateMachine restored_machine(CodeStateRule{});
  RestoreFrom(decoded.code_state, restored_machine);
  EXPECT_EQ(restored_machine.state(), CodeState::kDrifting);
  EXPECT_EQ(restored_machine.entered_at(), std::chrono::seconds(140));
  EXPECT_EQ(restored_machine.condition_since(), std::chrono::seconds(130));
  EXPECT_EQ(restored_machine.last_alert(), std::chrono::seconds(107));
  EXPECT_EQ(restored_machine.alerts(), 3u);
  EXPECT_EQ(decoded.state_since_unix, 1234.5);
  EXPECT_EQ(decoded.latest_proposal, "p/q.table");

  History restored_history(2, 2, 2);
  restored_history.ImportState(decoded.history);
  const auto points = restored_history.Points();
  const auto expected = history.Points();
  ASSERT_EQ(points.size(), expected.size());
  for (size_t i = 0; i < points.size(); ++i) {
    EXPECT_EQ(points[i].unix_seconds, expected[i].unix_seconds);
    EXPECT_EQ(points[i].entropy_bits, expected[i].entropy_bits);
    EXPECT_EQ(points[i].saving_ratio, expected[i].saving_ratio);
    EXPECT_EQ(points[i].deployed_mean_bits, expected[i].deployed_mean_bits);
    EXPECT_EQ(points[i].state, expected[i].state);
  }
  // Both histories keep evolving alike (the eviction counter came back too).
  history.Add(HistoryPoint{.unix_seconds = 2000});
  restored_history.Add(HistoryPoint{.unix_seconds = 2000});
  EXPECT_EQ(history.Points().front().unix_seconds, restored_history.Points().front().unix_seconds);

  // The restored evaluator continues like the original: unknown totals and rates agree.
  Model restored_model(Bytes(1), WindowSpec{.symbols = 4000}, clock);
  ASSERT_TRUE(restored_model.ImportState(decoded.model).ok());
  ModelEvaluator restored_evaluator({});
  decoded.evaluator.last_at -= std::chrono::seconds(100);  // same clock here: undo the shift
  restored_evaluator.ImportState(decoded.evaluator);
  clock.Advance(std::chrono::seconds(2));
  const auto more = Records(5, 50);
  Feed(model, more);
  Feed(restored_model, more);
  const Evaluation a = evaluator.Evaluate(model.Sample(), &table.value());
  const Evaluation b = restored_evaluator.Evaluate(restored_model.Sample(), &table.value());
  EXPECT_GT(a.unknown_symbols_total, 0u);
  EXPECT_EQ(a.unknown_symbols_total, b.unknown_symbols_total);
  EXPECT_GT(a.symbols_per_second, 0);
  EXPECT_EQ(a.symbols_per_second, b.symbols_per_second);
  EXPECT_EQ(a.entropy.plugin_bits, b.entropy.plugin_bits);
}

// A small but complete checkpoint file for the framing tests.
std::string SampleFile() {
  ManualClock clock;
  Model model(Tokens(true), WindowSpec{.symbols = 50}, clock);
  Feed(model, Records(6, 20));
  ModelCheckpoint checkpoint{.identity = "stream=a model=b", .model = model.ExportState()};
  checkpoint.history.fine.push_back(HistoryPoint{.unix_seconds = 5, .entropy_bits = 1.5});
  return EncodeCheckpointFile(EncodeModelCheckpoint(checkpoint));
}

TEST(CheckpointFile, HeaderLayoutAndCrcAreAsDocumented) {
  // CRC-32 (the zlib/PNG/Ethernet CRC) of the ASCII string "123456789" is 0xCBF43926: the
  // standard check value (Greg Cook, Catalogue of parametrised CRC algorithms, CRC-32/ISO-HDLC;
  // from memory).
  const std::string file = EncodeCheckpointFile("123456789");
  const std::string expected = std::string("CDCK") + std::string("\x01\x00\x00\x00", 4) +
                               std::string("\x09\x00\x00\x00\x00\x00\x00\x00", 8) + "123456789" +
                               std::string("\x26\x39\xf4\xcb", 4);
  EXPECT_EQ(file, expected);
  auto payload = DecodeCheckpointFile(file);
  ASSERT_TRUE(payload.ok()) << payload.error().message;
  EXPECT_EQ(payload.value(), "123456789");
}

TEST(CheckpointFile, EveryFlippedBitIsDetected) {
  const std::string file = SampleFile();
  ASSERT_TRUE(DecodeCheckpointFile(file).ok());
  for (size_t byte = 0; byte < file.size(); ++byte) {
    for (int bit = 0; bit < 8; ++bit) {
      std::string bad = file;
      bad[byte] = static_cast<char>(bad[byte] ^ (1 << bit));
      EXPECT_FALSE(DecodeCheckpointFile(bad).ok()) << "byte " << byte << " bit " << bit;
    }
  }
}

TEST(CheckpointFile, EveryTruncationIsDetected) {
  const std::string file = SampleFile();
  for (size_t size = 0; size < file.size(); ++size) {
    auto decoded = DecodeCheckpointFile(std::string_view(file).substr(0, size));
    ASSERT_FALSE(decoded.ok()) << size;
    EXPECT_EQ(decoded.error().problem, CheckpointProblem::kTruncated) << size;
  }
  auto longer = DecodeCheckpointFile(file + "x");
  ASSERT_FALSE(longer.ok());
  EXPECT_EQ(longer.error().problem, CheckpointProblem::kCorrupt);
}

TEST(CheckpointFile, NewerFormatIsRefusedAndOlderUnknownOnesToo) {
  auto newer = DecodeCheckpointFile(EncodeCheckpointFile("x", kCheckpointFormatVersion + 1));
  ASSERT_FALSE(newer.ok());
  EXPECT_EQ(newer.error().problem, CheckpointProblem::kNewerFormat);
  EXPECT_NE(newer.error().message.find("newer"), std::string::npos);
  auto zero = DecodeCheckpointFile(EncodeCheckpointFile("x", 0));
  ASSERT_FALSE(zero.ok());
  EXPECT_EQ(zero.error().problem, CheckpointProblem::kOldFormat);
  auto foreign = DecodeCheckpointFile("PK\x03\x04 certainly not a checkpoint file");
  ASSERT_FALSE(foreign.ok());
  EXPECT_EQ(foreign.error().problem, CheckpointProblem::kNotCheckpoint);
}

// Payloads that pass the crc but do not parse (a bug, or garbage with a valid crc) are
// refused without crashing or allocating beyond their size.
TEST(CheckpointPayload, TruncatedOrRandomPayloadsAreMalformed) {
  const std::string file = SampleFile();
  const std::string payload = DecodeCheckpointFile(file).value();
  ASSERT_TRUE(DecodeModelCheckpoint(payload).ok());
  for (size_t size = 0; size < payload.size(); ++size) {
    auto decoded = DecodeModelCheckpoint(std::string_view(payload).substr(0, size));
    ASSERT_FALSE(decoded.ok()) << size;
    EXPECT_EQ(decoded.error().problem, CheckpointProblem::kMalformed);
  }
  std::mt19937_64 rng(9);
  for (int i = 0; i < 2000; ++i) {
    std::string garbage(rng() % 64, '\0');
    for (char& c : garbage) c = static_cast<char>(rng() % 256);
    (void)DecodeModelCheckpoint(garbage);  // must return, whatever it says
  }
  // An identity, then a key count of 2^63 - 1: refused before any allocation.
  EXPECT_FALSE(
      DecodeModelCheckpoint(std::string("\x01x") + "\xff\xff\xff\xff\xff\xff\xff\xff\x7f").ok());
}

// Every part of a model's definition is part of its identity.
TEST(CheckpointIdentity, AnyDefinitionChangeChangesTheIdentity) {
  const WindowSpec count{.symbols = 1000};
  const WindowSpec time{.span = std::chrono::seconds(60), .buckets = 6};
  const std::string base = ModelIdentity("s", "m", Tokens(false), count);
  EXPECT_EQ(base, ModelIdentity("s", "m", Tokens(false), count));
  SymbolizerSpec delimiters = Tokens(false);
  delimiters.tokens.delimiters = " ,";
  const std::vector<std::string> others = {
      ModelIdentity("t", "m", Tokens(false), count),
      ModelIdentity("s", "n", Tokens(false), count),
      ModelIdentity("s", "m", Tokens(true), count),
      ModelIdentity("s", "m", Tokens(false, 10), count),
      ModelIdentity("s", "m", delimiters, count),
      ModelIdentity("s", "m", Tokens(false), WindowSpec{.symbols = 1001}),
      ModelIdentity("s", "m", Tokens(false), time),
      ModelIdentity("s", "m", Tokens(false), WindowSpec{.span = time.span, .buckets = 7}),
      ModelIdentity("s", "m", Bytes(1), count),
      ModelIdentity("s", "m", Bytes(2), count),
      ModelIdentity("s", "m", Field(0, 8, FieldOrder::kBig, FieldTransform::kNone), count),
      ModelIdentity("s", "m", Field(1, 8, FieldOrder::kBig, FieldTransform::kNone), count),
      ModelIdentity("s", "m", Field(0, 9, FieldOrder::kBig, FieldTransform::kNone), count),
      ModelIdentity("s", "m", Field(0, 8, FieldOrder::kLittle, FieldTransform::kNone), count),
      ModelIdentity("s", "m", Field(0, 8, FieldOrder::kBig, FieldTransform::kXor), count)};
  for (size_t i = 0; i < others.size(); ++i) {
    EXPECT_NE(others[i], base) << i;
    for (size_t j = 0; j < i; ++j) EXPECT_NE(others[i], others[j]) << i << " " << j;
  }
}

class CheckpointFiles : public ::testing::Test {
 protected:
  void SetUp() override {
    std::string pattern = (fs::temp_directory_path() / "checkpoint-test-XXXXXX").string();
    ASSERT_NE(::mkdtemp(pattern.data()), nullptr);
    dir_ = pattern;
  }
  void TearDown() override { fs::remove_all(dir_); }
  fs::path dir_;
};

TEST_F(CheckpointFiles, WrittenAtomicallyAndReadBackOnlyForTheSameModel) {
  const std::string path = (dir_ / "m.ckpt").string();
  auto missing = ReadModelCheckpoint(path, "id");
  ASSERT_FALSE(missing.ok());
  EXPECT_EQ(missing.error().problem, CheckpointProblem::kMissing);

  ManualClock clock;
  Model model(Bytes(2), WindowSpec{.symbols = 100}, clock);
  Feed(model, Records(7, 30));
  const std::string identity = ModelIdentity("s", "m", Bytes(2), WindowSpec{.symbols = 100});
  const ModelCheckpoint checkpoint{.identity = identity, .model = model.ExportState()};
  ASSERT_TRUE(WriteModelCheckpoint(path, checkpoint).ok());
  ASSERT_TRUE(WriteModelCheckpoint(path, checkpoint).ok());  // over an existing file
  EXPECT_FALSE(fs::exists(path + ".tmp"));
  auto read = ReadModelCheckpoint(path, identity);
  ASSERT_TRUE(read.ok()) << read.error().message;
  EXPECT_EQ(read.value().model.window.ids, checkpoint.model.window.ids);

  const std::string other = ModelIdentity("s", "m", Bytes(2), WindowSpec{.symbols = 200});
  auto mismatch = ReadModelCheckpoint(path, other);
  ASSERT_FALSE(mismatch.ok());
  EXPECT_EQ(mismatch.error().problem, CheckpointProblem::kMismatch);
  EXPECT_NE(mismatch.error().message.find("symbols 100"), std::string::npos);
}

TEST_F(CheckpointFiles, UnwritablePlacesAreErrorsWithTheSystemReason) {
  // A path below a regular file fails with ENOTDIR even for root (chmod would not stop root).
  std::ofstream(dir_ / "plain") << "x";
  const auto written = WriteFileAtomically((dir_ / "plain" / "m.ckpt").string(), "data");
  ASSERT_FALSE(written.ok());
  EXPECT_NE(written.error().message.find("Not a directory"), std::string::npos)
      << written.error().message;
  const auto absent = WriteFileAtomically((dir_ / "absent" / "m.ckpt").string(), "data");
  ASSERT_FALSE(absent.ok());
  EXPECT_NE(absent.error().message.find("No such file"), std::string::npos);
}

}  // namespace
}  // namespace codedrift
