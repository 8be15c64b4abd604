#include "codedrift/evaluator.h"

#include <random>

#include <gtest/gtest.h>

#include "codedrift/entropy.h"

namespace codedrift {
namespace {

// Invented i.i.d. byte source over `alphabet` with geometric-like weights (property tests).
std::string Source(uint64_t seed, size_t n, const std::string& alphabet, double decay) {
  std::mt19937_64 rng(seed);
  std::vector<double> weights;
  double w = 1;
  for (size_t i = 0; i < alphabet.size(); ++i, w *= decay) weights.push_back(w);
  std::discrete_distribution<size_t> pick(weights.begin(), weights.end());
  std::string out(n, ' ');
  for (char& c : out) c = alphabet[pick(rng)];
  return out;
}

SymbolCounts CountsOf(std::string_view text) {
  SymbolCounts counts(Alphabet::Bytes());
  for (char c : text) counts.Add(SymbolKey(1, c));
  return counts;
}

CodeTable TrainOn(std::string_view text) {
  auto table = TrainPrefixTable(CountsOf(text), 15, 8);
  EXPECT_TRUE(table.ok());
  return table.value();
}

void Feed(Model& model, std::string_view text, size_t record = 100) {
  for (size_t i = 0; i < text.size(); i += record) model.Ingest(text.substr(i, record));
}

TEST(ModelEvaluator, WindowFiguresEqualTheLibraryOnTheLastNSymbols) {
  SteadyClock clock;
  const std::string text = Source(1, 300'000, "abcdefghij", 0.7);
  const CodeTable table = TrainOn(text.substr(0, 50'000));
  for (int block : {1, 2}) {
    SymbolizerSpec spec;
    spec.block = block;
    Model model(spec, WindowSpec{.symbols = 65'536}, clock);
    Feed(model, text, 333);
    ModelEvaluator evaluator({});
    const Evaluation e = evaluator.Evaluate(model.Sample(), spec.block == 1 ? &table : nullptr);
    if (spec.block != 1) {
      EXPECT_EQ(e.window_symbols, 65'536u);
      continue;
    }
    const SymbolCounts expected = CountsOf(std::string_view(text).substr(text.size() - 65'536));
    const auto values = expected.Values();
    EXPECT_EQ(e.window_symbols, 65'536u);
    EXPECT_DOUBLE_EQ(e.entropy.plugin_bits, EstimateEntropy(values).plugin_bits);
    const TableFit fit = EvaluateTable(table, expected);
    ASSERT_TRUE(e.deployed_mean_bits.has_value());
    EXPECT_DOUBLE_EQ(*e.deployed_mean_bits, *fit.deployed_mean_bits);
    EXPECT_NEAR(*e.redundancy_bits, *fit.deployed_mean_bits - e.entropy.plugin_bits, 1e-12);
  }
}

TEST(ModelEvaluator, StationarySourceShowsNoConfidentSaving) {
  SteadyClock clock;
  const std::string text = Source(2, 1'200'000, "abcdefghijklmnop", 0.8);
  const CodeTable table = TrainOn(text.substr(0, 200'000));
  Model model(SymbolizerSpec{}, WindowSpec{.symbols = 1'000'000}, clock);
  Feed(model, std::string_view(text).substr(200'000));
  ModelEvaluator evaluator({});
  const Evaluation e = evaluator.Evaluate(model.Sample(), &table);
  ASSERT_TRUE(e.saving_ratio.has_value());
  ASSERT_TRUE(e.saving_lower_ratio.has_value());
  EXPECT_LT(*e.saving_lower_ratio, 0.01);
  EXPECT_LE(*e.saving_lower_ratio, *e.saving_ratio);
  EXPECT_LT(std::abs(*e.saving_ratio), 0.01);
}

TEST(ModelEvaluator, ShiftedSourceShowsTheSavingAndUnknowns) {
  SteadyClock clock;
  const std::string before = Source(3, 200'000, "abcdefgh", 0.9);
  const std::string after = Source(4, 1'000'000, "hgfedcbaXYZ", 0.6);  // reordered + new
  const CodeTable table = TrainOn(before);
  Model model(SymbolizerSpec{}, WindowSpec{.symbols = 1'000'000}, clock);
  Feed(model, after);
  ModelEvaluator evaluator({});
  const Evaluation e = evaluator.Evaluate(model.Sample(), &table);
  ASSERT_TRUE(e.saving_ratio.has_value());
  // The ideal bound caps any code's saving (Shannon: no code beats the entropy).
  EXPECT_GT(*e.saving_ratio, 0.1);
  EXPECT_LE(*e.saving_ratio, *e.ideal_saving_ratio + 1e-12);
  EXPECT_LE(*e.saving_lower_ratio, *e.saving_ratio);
  EXPECT_GT(*e.saving_lower_ratio, 0.1);
  EXPECT_GT(e.unknown_in_window, 0u);
  EXPECT_EQ(e.unknown_symbols_total, e.unknown_in_window);  // everything seen is in the window
  ASSERT_FALSE(e.top_drift.empty());
}

TEST(ModelEvaluator, TokensAndTimeWindows) {
  ManualClock clock;
  SymbolizerSpec spec;
  spec.kind = AlphabetKind::kTokens;
  Model model(spec, WindowSpec{.span = std::chrono::seconds(60), .buckets = 6}, clock);
  model.Ingest("temp=14 ok\n");
  model.Ingest("temp=15 ok\n");
  ModelEvaluator evaluator({});
  Evaluation e = evaluator.Evaluate(model.Sample(), nullptr);
  EXPECT_EQ(e.window_symbols, 8u);  // temp 14 ok <eor> temp 15 ok <eor>
  clock.Advance(std::chrono::seconds(61));
  model.Ingest("x\n");
  e = evaluator.Evaluate(model.Sample(), nullptr);
  EXPECT_EQ(e.window_symbols, 2u);
  EXPECT_NEAR(e.records_per_second, 1.0 / 61, 1e-9);
}

}  // namespace
}  // namespace codedrift
