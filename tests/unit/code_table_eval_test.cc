// What code tables cost on histograms: hand-computed cases, information-theory identities and
// bounds on random (invented) distributions, retraining and the out-of-sample saving.
#include <cmath>
#include <numeric>
#include <random>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "codedrift/canonical_code.h"
#include "codedrift/code_table.h"

namespace codedrift {
namespace {

const std::string kTables = std::string(CODEDRIFT_TEST_DATA) + "/tables/";

SymbolKey Byte(int value) { return SymbolKey(1, static_cast<char>(value)); }

// Entropy in bits of counts, computed here from the definition (Cover & Thomas eq. 2.1).
double EntropyOf(const SymbolCounts& counts) {
  double h = 0;
  for (const auto& [key, count] : counts.map()) {
    const double p = static_cast<double>(count) / static_cast<double>(counts.total());
    h -= p * std::log2(p);
  }
  return h;
}

// Lengths of a random full binary tree with `leaves` leaves: repeatedly split a random leaf.
// A full tree's leaf depths satisfy Kraft with equality (Kraft 1949).
std::vector<int> RandomCompleteLengths(int leaves, std::mt19937& random) {
  std::vector<int> depths = {0};
  while (static_cast<int>(depths.size()) < leaves) {
    std::uniform_int_distribution<size_t> pick(0, depths.size() - 1);
    const size_t i = pick(random);
    const int depth = depths[i] + 1;
    depths[i] = depth;
    depths.push_back(depth);
  }
  return depths;
}

// Draws n symbols from a distribution over bytes 0..weights.size()-1.
SymbolCounts Sample(const std::vector<double>& weights, uint64_t n, std::mt19937& random) {
  std::discrete_distribution<int> source(weights.begin(), weights.end());
  SymbolCounts counts(Alphabet::Bytes());
  for (uint64_t i = 0; i < n; ++i) counts.Add(Byte(source(random)));
  return counts;
}

// RFC 1951 section 3.2.2 small example (A=2, B=1, C=3, D=3). Counts A:3, B:5, C:1, D:1 give,
// by hand, L = (3*2 + 5*1 + 1*3 + 1*3) / 10 = 17/10 = 1.7 bits per symbol.
TEST(CodeTableEval, Rfc1951SmallExampleMeanLength) {
  auto table = LoadCodeTable(kTables + "rfc1951_small.table");
  ASSERT_TRUE(table.ok()) << table.error().message;
  SymbolCounts counts(Alphabet::Bytes());
  counts.Add("A", 3);
  counts.Add("B", 5);
  counts.Add("C", 1);
  counts.Add("D", 1);
  const TableFit fit = EvaluateTable(table.value(), counts);
  ASSERT_TRUE(fit.deployed_mean_bits.has_value());
  EXPECT_DOUBLE_EQ(*fit.deployed_mean_bits, 1.7);
  EXPECT_EQ(fit.kraft_sum, 1.0);  // RFC 1951 3.2.2: a complete code
  EXPECT_EQ(fit.unknown_symbols, 0u);
}

TEST(CodeTableEval, CostOfEveryKind) {
  CodeTable prefix;
  prefix.alphabet = Alphabet::Tokens();
  prefix.lengths = {{"GET", 1}, {"PUT", 2}};
  EXPECT_EQ(prefix.CostBits("PUT"), 2.0);
  EXPECT_EQ(prefix.CostBits("temp"), std::nullopt);  // uncovered, no escape
  EXPECT_FALSE(prefix.CoversWholeAlphabet());
  prefix.escape = EscapeCode{5, 8};
  // DESIGN.md section 3: escape + literal_bits * (token length + 1) = 5 + 8 * 5.
  EXPECT_EQ(prefix.CostBits("temp"), 45.0);
  EXPECT_TRUE(prefix.CoversWholeAlphabet());
  EXPECT_FALSE(prefix.Covers("temp"));

  CodeTable fixed;
  fixed.alphabet = Alphabet::Field(12);
  fixed.kind = CodeKind::kFixed;
  fixed.fixed_bits = 12;
  EXPECT_EQ(fixed.CostBits(FieldKey(4095)), 12.0);
  EXPECT_EQ(fixed.KraftSumValue(), 1.0);  // 4096 / 2^12
  fixed.fixed_bits = 13;
  EXPECT_EQ(fixed.KraftSumValue(), 0.5);

  CodeTable model;
  model.alphabet = Alphabet::Bytes();
  model.kind = CodeKind::kFrequencies;
  model.frequencies = {{"A", 5}, {"B", 2}};
  model.escape = EscapeCode{0, 8};
  model.escape_frequency = 1;
  // q = 5/8, 2/8, escape 1/8: -log2 q = log2(8/5), 2, and 3 + 8 for a byte literal.
  EXPECT_DOUBLE_EQ(*model.CostBits("A"), std::log2(8.0 / 5.0));
  EXPECT_DOUBLE_EQ(*model.CostBits("B"), 2.0);
  EXPECT_DOUBLE_EQ(*model.CostBits("C"), 11.0);
  EXPECT_EQ(model.KraftSumValue(), 1.0);
}

// For a complete code, L - H = D(p || 2^-l) (Cover & Thomas, 2nd ed., proof of Theorem 5.3.1,
// from memory; DESIGN.md section 3). With Kraft sum c < 1 it is D(p || r) + log2(1/c) with
// r = 2^-l / c. D is computed here independently of the library.
TEST(CodeTableEval, RedundancyIsRelativeEntropy) {
  std::mt19937 random(7);
  for (int round = 0; round < 200; ++round) {
    const int symbols = std::uniform_int_distribution<int>(2, 30)(random);
    std::vector<int> lengths = RandomCompleteLengths(symbols, random);
    const bool complete = round % 2 == 0;
    if (!complete) lengths.back() += 1;  // its sibling's half of the space stays unused
    CodeTable table;
    SymbolCounts counts(Alphabet::Bytes());
    std::uniform_int_distribution<uint64_t> count(1, 1000);
    for (int s = 0; s < symbols; ++s) {
      table.lengths[Byte(s)] = lengths[static_cast<size_t>(s)];
      counts.Add(Byte(s), count(random));
    }
    double kraft = 0;
    for (int l : lengths) kraft += std::ldexp(1.0, -l);
    double divergence = 0;
    for (int s = 0; s < symbols; ++s) {
      const double p =
          static_cast<double>(counts.Count(Byte(s))) / static_cast<double>(counts.total());
      const double r = std::ldexp(1.0, -lengths[static_cast<size_t>(s)]) / kraft;
      divergence += p * std::log2(p / r);
    }
    const double expected = divergence + std::log2(1.0 / kraft);

    const TableFit fit = EvaluateTable(table, counts, static_cast<size_t>(symbols));
    ASSERT_TRUE(fit.deployed_mean_bits.has_value());
    EXPECT_NEAR(*fit.deployed_mean_bits - EntropyOf(counts), expected, 1e-12);
    EXPECT_NEAR(fit.kraft_sum, kraft, 1e-15);
    if (complete) {
      EXPECT_EQ(fit.kraft_sum, 1.0);
    }
    // The shares p_s (l_s + log2 p_s) add up to the redundancy, ranked largest first.
    double shares = 0;
    for (size_t i = 0; i < fit.top_drift.size(); ++i) {
      shares += fit.top_drift[i].share_bits;
      if (i > 0) {
        EXPECT_GE(fit.top_drift[i - 1].share_bits, fit.top_drift[i].share_bits);
      }
    }
    EXPECT_EQ(fit.top_drift.size(), static_cast<size_t>(symbols));
    EXPECT_NEAR(shares, expected, 1e-12);
  }
}

// Ideal code lengths -log2 q under a model q give mean length H(p) + D(p || q), the
// cross-entropy (Cover & Thomas, 2nd ed., Theorem 5.4.3, wrong-code theorem, from memory).
TEST(CodeTableEval, FrequencyTableMeanIsCrossEntropy) {
  std::mt19937 random(11);
  for (int round = 0; round < 100; ++round) {
    const int symbols = std::uniform_int_distribution<int>(1, 40)(random);
    CodeTable table;
    table.kind = CodeKind::kFrequencies;
    SymbolCounts counts(Alphabet::Bytes());
    std::uniform_int_distribution<uint64_t> value(1, 5000);
    uint64_t model_total = 0;
    for (int s = 0; s < symbols; ++s) {
      const uint64_t f = value(random);
      table.frequencies[Byte(s)] = f;
      model_total += f;
      if (value(random) % 3 != 0) counts.Add(Byte(s), value(random));
    }
    if (counts.total() == 0) counts.Add(Byte(0), 1);
    double cross_entropy = 0;
    for (const auto& [key, count] : counts.map()) {
      const double p = static_cast<double>(count) / static_cast<double>(counts.total());
      const double q =
          static_cast<double>(table.frequencies.at(key)) / static_cast<double>(model_total);
      cross_entropy -= p * std::log2(q);
    }
    const TableFit fit = EvaluateTable(table, counts);
    ASSERT_TRUE(fit.deployed_mean_bits.has_value());
    EXPECT_NEAR(*fit.deployed_mean_bits, cross_entropy, 1e-9);
    EXPECT_GE(*fit.deployed_mean_bits, EntropyOf(counts) - 1e-12);  // Gibbs' inequality
  }
}

// Frequencies that already total 2^precision_bits are what a range coder would use as is.
TEST(CodeTableEval, PrecisionKeepsExactTotals) {
  CodeTable table;
  table.kind = CodeKind::kFrequencies;
  table.frequencies = {{"A", 2048}, {"B", 1024}, {"C", 1023}};
  table.escape = EscapeCode{0, 8};
  table.escape_frequency = 1;  // total 4096 = 2^12
  table.precision_bits = 12;
  EXPECT_DOUBLE_EQ(*table.CostBits("A"), 1.0);
  EXPECT_DOUBLE_EQ(*table.CostBits("B"), 2.0);
  EXPECT_DOUBLE_EQ(*table.CostBits("C"), 12.0 - std::log2(1023.0));
  EXPECT_DOUBLE_EQ(*table.CostBits("Z"), 12.0 + 8.0);  // escape q = 1/4096, then 8 bits
}

TEST(QuantizeFrequencies, HandComputedCases) {
  // Counts (5, 3) at 2 bits (total 4): floors (2, 1); the spare unit goes where it saves more,
  // 3*log2(2/1) = 3 > 5*log2(3/2) = 2.92 bits, giving (2, 2): 8 bits vs 8.075 for (3, 1).
  auto a = QuantizeFrequencies(std::vector<uint64_t>{5, 3}, 2);
  ASSERT_TRUE(a.ok());
  EXPECT_EQ(a.value(), (std::vector<uint64_t>{2, 2}));
  // A rare symbol keeps frequency 1 out of 16; the zero stays zero.
  auto b = QuantizeFrequencies(std::vector<uint64_t>{1, 0, 1000000}, 4);
  ASSERT_TRUE(b.ok());
  EXPECT_EQ(b.value(), (std::vector<uint64_t>{1, 0, 15}));
  // Five symbols cannot each get >= 1 out of 4.
  EXPECT_FALSE(QuantizeFrequencies(std::vector<uint64_t>{1, 1, 1, 1, 1}, 2).ok());
  EXPECT_FALSE(QuantizeFrequencies(std::vector<uint64_t>{1}, 0).ok());
  // Counts that already total 2^12 are kept as they are.
  const std::vector<uint64_t> exact = {2048, 1024, 1023, 1};
  auto c = QuantizeFrequencies(exact, 12);
  ASSERT_TRUE(c.ok());
  EXPECT_EQ(c.value(), exact);
}

// Property: the quantized model totals 2^P, keeps every seen symbol and, on small cases, costs
// no more than the best quantization found by exhaustive search.
TEST(QuantizeFrequencies, ExactTotalAndOptimalOnSmallCases) {
  std::mt19937 random(3);
  for (int round = 0; round < 300; ++round) {
    const int symbols = std::uniform_int_distribution<int>(1, 5)(random);
    const int precision = std::uniform_int_distribution<int>(2, 5)(random);
    std::vector<uint64_t> counts;
    for (int s = 0; s < symbols; ++s) {
      const bool rare = std::uniform_int_distribution<int>(0, 2)(random) == 0;
      counts.push_back(
          std::uniform_int_distribution<uint64_t>(rare ? 0 : 1, rare ? 2 : 500)(random));
    }
    const uint64_t nonzero = static_cast<uint64_t>(
        std::count_if(counts.begin(), counts.end(), [](uint64_t c) { return c > 0; }));
    const uint64_t target = uint64_t{1} << precision;
    auto q = QuantizeFrequencies(counts, precision);
    if (nonzero > target) {
      EXPECT_FALSE(q.ok());
      continue;
    }
    ASSERT_TRUE(q.ok());
    if (nonzero == 0) continue;
    EXPECT_EQ(std::accumulate(q.value().begin(), q.value().end(), uint64_t{0}), target);
    auto cost = [&](const std::vector<uint64_t>& model) {
      double bits = 0;
      for (size_t i = 0; i < counts.size(); ++i) {
        if (counts[i] > 0) {
          bits += static_cast<double>(counts[i]) *
                  (precision - std::log2(static_cast<double>(model[i])));
        }
      }
      return bits;
    };
    for (size_t i = 0; i < counts.size(); ++i) {
      EXPECT_EQ(q.value()[i] == 0, counts[i] == 0);
    }
    // Exhaustive search over every model with each seen symbol >= 1 and the right total.
    double best = INFINITY;
    std::vector<uint64_t> model(counts.size(), 0);
    auto search = [&](auto&& self, size_t i, uint64_t left) -> void {
      if (i == counts.size()) {
        if (left == 0) best = std::min(best, cost(model));
        return;
      }
      if (counts[i] == 0) {
        model[i] = 0;
        self(self, i + 1, left);
        return;
      }
      for (uint64_t v = 1; v <= left; ++v) {
        model[i] = v;
        self(self, i + 1, left - v);
      }
    };
    search(search, 0, target);
    EXPECT_LE(cost(q.value()), best + 1e-9);
  }
}

TEST(CodeTableEval, UncoveredSymbolsWithoutEscape) {
  auto table = LoadCodeTable(kTables + "rfc1951_small.table");
  ASSERT_TRUE(table.ok());
  SymbolCounts counts(Alphabet::Bytes());
  counts.Add("A", 6);
  counts.Add("Z", 2);
  const TableFit fit = EvaluateTable(table.value(), counts);
  EXPECT_FALSE(fit.deployed_mean_bits.has_value());  // DESIGN.md section 5: null, not a number
  EXPECT_EQ(fit.unknown_symbols, 2u);
  ASSERT_EQ(fit.top_drift.size(), 1u);
  EXPECT_EQ(fit.top_drift[0].key, "A");
  EXPECT_DOUBLE_EQ(fit.top_drift[0].probability, 0.75);

  EXPECT_FALSE(
      EvaluateTable(table.value(), SymbolCounts(Alphabet::Bytes())).deployed_mean_bits.has_value());
}

TEST(CodeTableEval, TopDriftRanksSharesAndStopsAtTop) {
  // Lengths 1, 2, 3, 3 under p = 1/8, 1/8, 1/4, 1/2: shares p (l + log2 p) are, by hand,
  // A: 1/8 (1 - 3) = -0.25, B: 1/8 (2 - 3) = -0.125, C: 1/4 (3 - 2) = 0.25, D: 1/2 (3 - 1) = 1.
  CodeTable table;
  table.lengths = {{"A", 1}, {"B", 2}, {"C", 3}, {"D", 3}};
  SymbolCounts counts(Alphabet::Bytes());
  counts.Add("A", 1);
  counts.Add("B", 1);
  counts.Add("C", 2);
  counts.Add("D", 4);
  const TableFit fit = EvaluateTable(table, counts, 2);
  ASSERT_EQ(fit.top_drift.size(), 2u);
  EXPECT_EQ(fit.top_drift[0].key, "D");
  EXPECT_DOUBLE_EQ(fit.top_drift[0].share_bits, 1.0);
  EXPECT_DOUBLE_EQ(fit.top_drift[0].cost_bits, 3.0);
  EXPECT_EQ(fit.top_drift[1].key, "C");
  EXPECT_DOUBLE_EQ(fit.top_drift[1].share_bits, 0.25);
  // Mean (1 + 2 + 6 + 12) / 8 = 2.625, H = 1.75: redundancy 0.875 = sum of the four shares.
  EXPECT_DOUBLE_EQ(*fit.deployed_mean_bits, 2.625);
}

TEST(TrainPrefixTable, HandComputedHuffmanWithEscape) {
  // Counts A:1, B:3, C:5, D:12 and an escape of weight 1 (one symbol seen once, Good 1953).
  // Huffman by hand: 1+1 -> 2; 2+3 -> 5; 5+5 -> 10; 10+12 -> 22, so D=1, C=2, B=3, A=4,
  // escape=4 (the merge of the two 5s is forced, so no tie can change the lengths).
  SymbolCounts counts(Alphabet::Bytes());
  counts.Add("A", 1);
  counts.Add("B", 3);
  counts.Add("C", 5);
  counts.Add("D", 12);
  auto table = TrainPrefixTable(counts, 15, 8);
  ASSERT_TRUE(table.ok()) << table.error().message;
  EXPECT_EQ(table.value().lengths,
            (std::map<SymbolKey, int>{{"A", 4}, {"B", 3}, {"C", 2}, {"D", 1}}));
  ASSERT_TRUE(table.value().escape.has_value());
  EXPECT_EQ(table.value().escape->length, 4);
  EXPECT_EQ(table.value().escape->literal_bits, 8);
  EXPECT_EQ(table.value().KraftSumValue(), 1.0);
  ASSERT_TRUE(table.value().training_counts.has_value());
  EXPECT_EQ(table.value().training_counts->total(), 21u);
  // The trained table is a valid file.
  auto reparsed = ParseCodeTable(FormatCodeTable(table.value()), "trained.table");
  EXPECT_TRUE(reparsed.ok()) << reparsed.error().message;
}

TEST(TrainPrefixTable, KeepsTheEscapeAndRespectsLimits) {
  uint64_t histogram[256];
  for (int b = 0; b < 256; ++b) histogram[b] = 2 + static_cast<uint64_t>(b % 7);
  auto full = TrainPrefixTable(BytesFromHistogram(histogram), 15, 8);
  ASSERT_TRUE(full.ok());
  EXPECT_EQ(full.value().lengths.size(), 256u);
  EXPECT_TRUE(full.value().escape.has_value());  // even with every byte seen
  EXPECT_EQ(full.value().KraftSumValue(), 1.0);  // Huffman codes are complete
  for (const auto& entry : full.value().lengths) EXPECT_LE(entry.second, 15);

  // Four symbols and an escape cannot fit codewords of at most 2 bits (2^2 = 4 < 5).
  SymbolCounts four(Alphabet::Bytes());
  for (char c : std::string("ABCD")) four.Add(SymbolKey(1, c), 10);
  EXPECT_FALSE(TrainPrefixTable(four, 2, 8).ok());
  EXPECT_FALSE(TrainPrefixTable(four, 0, 8).ok());
  EXPECT_FALSE(TrainPrefixTable(four, 33, 8).ok());
  EXPECT_FALSE(TrainPrefixTable(four, 15, 0).ok());
  auto limited = TrainPrefixTable(four, 3, 8);
  ASSERT_TRUE(limited.ok());
  EXPECT_LE(limited.value().escape->length, 3);

  // Nothing seen yet: the escape alone.
  auto empty = TrainPrefixTable(SymbolCounts(Alphabet::Tokens()), 15, 8);
  ASSERT_TRUE(empty.ok());
  EXPECT_TRUE(empty.value().lengths.empty());
  EXPECT_EQ(empty.value().escape->length, 1);
}

// Source coding bound for Huffman codes, H <= L < H + 1 (Cover & Thomas, 2nd ed., Theorem
// 5.4.1 and section 5.8, from memory; DESIGN.md section 3). The escape entry of weight e takes
// at most log2(1 + e/N) more: Shannon lengths ceil(log2((N + e) / c)) bound the Huffman cost.
TEST(TrainPrefixTable, InSampleMeanWithinSourceCodingBound) {
  std::mt19937 random(5);
  for (int round = 0; round < 200; ++round) {
    const int symbols = std::uniform_int_distribution<int>(1, 60)(random);
    SymbolCounts counts(Alphabet::Bytes());
    uint64_t seen_once = 0;
    for (int s = 0; s < symbols; ++s) {
      const bool rare = std::uniform_int_distribution<int>(0, 4)(random) == 0;
      const uint64_t c = std::uniform_int_distribution<uint64_t>(1, rare ? 2 : 10000)(random);
      counts.Add(Byte(s), c);
      seen_once += c == 1 ? 1 : 0;
    }
    const double escape_weight = static_cast<double>(std::max<uint64_t>(seen_once, 1));
    auto table = TrainPrefixTable(counts, 32, 8);
    ASSERT_TRUE(table.ok()) << table.error().message;
    const TableFit fit = EvaluateTable(table.value(), counts);
    ASSERT_TRUE(fit.deployed_mean_bits.has_value());
    const double h = EntropyOf(counts);
    const double n = static_cast<double>(counts.total());
    EXPECT_GE(*fit.deployed_mean_bits, h - 1e-12);
    EXPECT_LT(*fit.deployed_mean_bits, h + 1 + std::log2(1 + escape_weight / n) + 1e-12);
    EXPECT_EQ(fit.unknown_symbols, 0u);
  }
}

// Tiny case by hand. Deployed: A=2, B=2, C=2, D=3, escape 3 (+8 literal bits); Kraft 1.
// Older A:1, B:3, C:5, D:12 retrains to D=1, C=2, B=3, A=4, escape 4 (see the test above).
// Newer A:4, B:2, C:1, D:8, E:1 (N = 16; E is new):
//   L_dep = (4*2 + 2*2 + 1*2 + 8*3 + 1*(3+8)) / 16 = 49/16,
//   L_new = (4*4 + 2*3 + 1*2 + 8*1 + 1*(4+8)) / 16 = 44/16, saving = 1 - 44/49 = 5/49;
//   p = 1/4, 1/8, 1/16, 1/2, 1/16: H = 1.875 = 30/16, ideal = 1 - 30/49 = 19/49.
TEST(EstimateSaving, HandComputedTinyCase) {
  CodeTable deployed;
  deployed.lengths = {{"A", 2}, {"B", 2}, {"C", 2}, {"D", 3}};
  deployed.escape = EscapeCode{3, 8};
  SymbolCounts older(Alphabet::Bytes());
  older.Add("A", 1);
  older.Add("B", 3);
  older.Add("C", 5);
  older.Add("D", 12);
  SymbolCounts newer(Alphabet::Bytes());
  newer.Add("A", 4);
  newer.Add("B", 2);
  newer.Add("C", 1);
  newer.Add("D", 8);
  newer.Add("E", 1);
  auto estimate = EstimateSaving(deployed, older, newer, 8);
  ASSERT_TRUE(estimate.has_value());
  EXPECT_DOUBLE_EQ(estimate->deployed_mean_bits, 49.0 / 16.0);
  EXPECT_DOUBLE_EQ(estimate->retrained_mean_bits, 44.0 / 16.0);
  EXPECT_DOUBLE_EQ(estimate->saving_ratio, 5.0 / 49.0);
  EXPECT_DOUBLE_EQ(estimate->ideal_saving_ratio, 19.0 / 49.0);

  // No estimate when the deployed code cannot cost the newer half.
  deployed.escape.reset();
  EXPECT_FALSE(EstimateSaving(deployed, older, newer, 8).has_value());
  EXPECT_FALSE(EstimateSaving(deployed, older, SymbolCounts(Alphabet::Bytes()), 8).has_value());
}

// When nothing drifted (all three samples from one invented source, large N), a retrained code
// saves about nothing; and out of sample it can never beat the entropy (Gibbs' inequality,
// Cover & Thomas Theorem 5.3.1), so saving <= ideal.
TEST(EstimateSaving, SameSourceSavesAboutNothing) {
  std::mt19937 random(13);
  std::vector<double> weights;
  for (int s = 1; s <= 40; ++s) weights.push_back(1.0 / s);  // Zipf-like
  const SymbolCounts training = Sample(weights, 200000, random);
  auto deployed = TrainPrefixTable(training, 15, 8);
  ASSERT_TRUE(deployed.ok());
  const SymbolCounts older = Sample(weights, 100000, random);
  const SymbolCounts newer = Sample(weights, 100000, random);
  auto estimate = EstimateSaving(deployed.value(), older, newer, 8);
  ASSERT_TRUE(estimate.has_value());
  EXPECT_LT(std::fabs(estimate->saving_ratio), 0.01);
  EXPECT_LE(estimate->saving_ratio, estimate->ideal_saving_ratio);
  EXPECT_GT(estimate->ideal_saving_ratio, 0.0);  // Huffman on 40 symbols is not ideal

  // A drifted source: the newer half favours the symbols the deployed code made long.
  std::vector<double> drifted(weights.rbegin(), weights.rend());
  const SymbolCounts older_drifted = Sample(drifted, 100000, random);
  const SymbolCounts newer_drifted = Sample(drifted, 100000, random);
  auto drift = EstimateSaving(deployed.value(), older_drifted, newer_drifted, 8);
  ASSERT_TRUE(drift.has_value());
  EXPECT_GT(drift->saving_ratio, 0.1);
  EXPECT_LE(drift->saving_ratio, drift->ideal_saving_ratio);
}

}  // namespace
}  // namespace codedrift
