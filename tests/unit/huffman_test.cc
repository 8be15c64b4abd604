#include "codedrift/huffman.h"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <functional>
#include <queue>
#include <random>
#include <utility>
#include <vector>

#include <gtest/gtest.h>

#include "codedrift/canonical_code.h"

namespace codedrift {
namespace {

// Plug-in entropy in bits of a weight vector (Cover & Thomas, Elements of Information Theory,
// eq. 2.1), written out here so these tests do not lean on the library's estimator.
double EntropyBits(const std::vector<uint64_t>& weights) {
  double total = 0;
  for (uint64_t weight : weights) total += static_cast<double>(weight);
  double bits = 0;
  for (uint64_t weight : weights) {
    if (weight == 0) continue;
    const double p = static_cast<double>(weight) / total;
    bits -= p * std::log2(p);
  }
  return bits;
}

double MeanBits(const std::vector<uint64_t>& weights, const std::vector<int>& lengths) {
  uint64_t total = 0;
  for (uint64_t weight : weights) total += weight;
  return static_cast<double>(CodeCostBits(weights, lengths)) / static_cast<double>(total);
}

// The optimal cost by the standard identity "cost = sum of the weights of all merged nodes"
// (each merge adds one bit to every symbol below it), computed with a binary heap, so it is
// independent of the library's two-queue construction.
uint64_t ReferenceHuffmanCost(const std::vector<uint64_t>& weights) {
  std::priority_queue<uint64_t, std::vector<uint64_t>, std::greater<>> heap;
  for (uint64_t weight : weights) {
    if (weight != 0) heap.push(weight);
  }
  if (heap.size() == 1) return heap.top();  // one symbol still costs one bit
  uint64_t cost = 0;
  while (heap.size() > 1) {
    const uint64_t a = heap.top();
    heap.pop();
    const uint64_t b = heap.top();
    heap.pop();
    cost += a + b;
    heap.push(a + b);
  }
  return cost;
}

// Cheapest cost over every length vector with lengths 1..limit that meets Kraft (sum <= 1):
// by Kraft 1949 exactly the prefix codes, so this is the optimum by exhaustion.
uint64_t BruteForceLimitedCost(const std::vector<uint64_t>& weights, int limit) {
  const size_t k = weights.size();
  std::vector<int> lengths(k, 1);
  uint64_t best = UINT64_MAX;
  while (true) {
    if (!ComputeKraftSum(lengths).over()) best = std::min(best, CodeCostBits(weights, lengths));
    size_t i = 0;
    while (i < k && lengths[i] == limit) lengths[i++] = 1;
    if (i == k) break;
    ++lengths[i];
  }
  return best;
}

// Package-merge exactly as Larmore & Hirschberg (J. ACM 37(3), 1990) state it, written for
// clarity, not speed: every item carries the multiset of symbols it contains; the 2n - 2
// cheapest items of the depth-1 list form the solution, and a symbol's length is how often it
// occurs in them. O(n^2 L), so only for small alphabets.
uint64_t TextbookPackageMergeCost(const std::vector<uint64_t>& weights, int limit) {
  struct Item {
    uint64_t weight;
    std::vector<int> symbols;
  };
  std::vector<Item> leaves;
  for (size_t s = 0; s < weights.size(); ++s) {
    if (weights[s] != 0) leaves.push_back({weights[s], {static_cast<int>(s)}});
  }
  std::stable_sort(leaves.begin(), leaves.end(),
                   [](const Item& a, const Item& b) { return a.weight < b.weight; });
  std::vector<Item> list = leaves;  // depth `limit`
  for (int depth = limit - 1; depth >= 1; --depth) {
    std::vector<Item> merged = leaves;
    for (size_t k = 0; k + 1 < list.size(); k += 2) {
      Item package{list[k].weight + list[k + 1].weight, list[k].symbols};
      package.symbols.insert(package.symbols.end(), list[k + 1].symbols.begin(),
                             list[k + 1].symbols.end());
      merged.push_back(std::move(package));
    }
    std::stable_sort(merged.begin(), merged.end(),
                     [](const Item& a, const Item& b) { return a.weight < b.weight; });
    list = std::move(merged);
  }
  std::vector<int> lengths(weights.size(), 0);
  for (size_t i = 0; i < 2 * leaves.size() - 2; ++i) {
    for (int symbol : list[i].symbols) ++lengths[symbol];
  }
  return CodeCostBits(weights, lengths);
}

int MaxLength(const std::vector<int>& lengths) {
  return *std::max_element(lengths.begin(), lengths.end());
}

// Invented data for property tests: either flat or strongly skewed (powers of two spread over
// `spread` octaves), so both binding and non-binding limits occur.
std::vector<uint64_t> RandomWeights(std::mt19937_64& rng, size_t k, int spread) {
  std::vector<uint64_t> weights(k);
  for (uint64_t& weight : weights) {
    const int octave = static_cast<int>(rng() % static_cast<uint64_t>(spread + 1));
    weight = (uint64_t{1} << octave) + rng() % ((uint64_t{1} << octave));
  }
  return weights;
}

TEST(Huffman, HaykinExample) {
  // Haykin, Communication Systems, Example 9.3 (also Sayood): p = (0.4, 0.2, 0.2, 0.1, 0.1),
  // mean length 2.2 bits, H = 2.121928094887362 bits; weights proportional to p.
  const std::vector<uint64_t> weights = {4, 2, 2, 1, 1};
  const std::vector<int> lengths = HuffmanLengths(weights);
  EXPECT_EQ(CodeCostBits(weights, lengths), 22u);
  EXPECT_DOUBLE_EQ(MeanBits(weights, lengths), 2.2);
  EXPECT_NEAR(EntropyBits(weights), 2.121928094887362, 1e-12);
  // Haykin: the two optimal sets are (2,2,2,3,3) (variance 0.16) and (1,2,3,4,4) (1.36); the
  // header promises the minimum-variance one.
  EXPECT_EQ(lengths, (std::vector<int>{2, 2, 2, 3, 3}));
}

TEST(Huffman, CoverThomasExample) {
  // Cover & Thomas, Elements of Information Theory, 2nd ed., Example 5.6.1:
  // p = (0.25, 0.25, 0.2, 0.15, 0.15) -> lengths (2,2,2,3,3), mean 2.3, H = 2.285475297.
  const std::vector<uint64_t> weights = {25, 25, 20, 15, 15};
  const std::vector<int> lengths = HuffmanLengths(weights);
  EXPECT_EQ(lengths, (std::vector<int>{2, 2, 2, 3, 3}));
  EXPECT_DOUBLE_EQ(MeanBits(weights, lengths), 2.3);
  EXPECT_NEAR(EntropyBits(weights), 2.285475297, 1e-9);
}

TEST(Huffman, HaykinEightSymbolExample) {
  // Haykin: p = (0.1, 0.1, 0.2, 0.1, 0.1, 0.2, 0.1, 0.1): mean 3.0, H = 2.921928094887362.
  const std::vector<uint64_t> weights = {1, 1, 2, 1, 1, 2, 1, 1};
  const std::vector<int> lengths = HuffmanLengths(weights);
  EXPECT_DOUBLE_EQ(MeanBits(weights, lengths), 3.0);
  EXPECT_NEAR(EntropyBits(weights), 2.921928094887362, 1e-12);
  EXPECT_TRUE(ComputeKraftSum(lengths).complete());
}

TEST(Huffman, ExtendedSourceExample) {
  // Haykin: p = (0.7, 0.15, 0.15) costs 1.3 bits per symbol; coding pairs costs 479/200 bits
  // per pair (1.1975 per symbol); H = 1.181290899.
  const std::vector<uint64_t> single = {70, 15, 15};
  EXPECT_DOUBLE_EQ(MeanBits(single, HuffmanLengths(single)), 1.3);
  std::vector<uint64_t> pairs;
  for (uint64_t a : single) {
    for (uint64_t b : single) pairs.push_back(a * b);
  }
  EXPECT_EQ(CodeCostBits(pairs, HuffmanLengths(pairs)) * 200, 479u * 10000u);
  EXPECT_NEAR(EntropyBits(single), 1.181290899, 1e-9);
}

TEST(Huffman, ZeroAndSingleWeights) {
  // By the header's contract: no codeword for zero weights; a lone symbol still gets one bit.
  EXPECT_EQ(HuffmanLengths(std::vector<uint64_t>{}), std::vector<int>{});
  EXPECT_EQ(HuffmanLengths(std::vector<uint64_t>{0, 0}), (std::vector<int>{0, 0}));
  EXPECT_EQ(HuffmanLengths(std::vector<uint64_t>{0, 7, 0}), (std::vector<int>{0, 1, 0}));
  EXPECT_EQ(HuffmanLengths(std::vector<uint64_t>{0, 7, 0, 1}), (std::vector<int>{0, 1, 0, 1}));
  auto limited = LimitedHuffmanLengths(std::vector<uint64_t>{0, 0, 5}, 1);
  ASSERT_TRUE(limited.ok());
  EXPECT_EQ(limited.value(), (std::vector<int>{0, 0, 1}));
}

TEST(LimitedHuffman, LarmoreHirschbergExample) {
  // Larmore & Hirschberg, J. ACM 37(3), 1990: frequencies [1, 32, 16, 4, 8, 2, 1].
  const std::vector<uint64_t> weights = {1, 32, 16, 4, 8, 2, 1};
  auto at8 = LimitedHuffmanLengths(weights, 8);
  ASSERT_TRUE(at8.ok()) << at8.error().message;
  EXPECT_EQ(at8.value(), (std::vector<int>{6, 1, 2, 4, 3, 5, 6}));  // limit 8: unrestricted
  EXPECT_EQ(CodeCostBits(weights, at8.value()), 126u);
  const std::vector<std::pair<int, uint64_t>> limit_costs = {{5, 128}, {4, 136}, {3, 160}};
  for (const auto& [limit, cost] : limit_costs) {
    auto lengths = LimitedHuffmanLengths(weights, limit);
    ASSERT_TRUE(lengths.ok()) << lengths.error().message;
    EXPECT_EQ(CodeCostBits(weights, lengths.value()), cost) << "limit " << limit;
    EXPECT_LE(MaxLength(lengths.value()), limit);
    EXPECT_FALSE(ComputeKraftSum(lengths.value()).over());
  }
  // Seven symbols cannot fit in codewords of two bits (at most 2^2 = 4 of them).
  EXPECT_FALSE(LimitedHuffmanLengths(weights, 2).ok());
}

TEST(LimitedHuffman, RejectsBadLimits) {
  const std::vector<uint64_t> weights = {3, 1, 2};
  EXPECT_FALSE(LimitedHuffmanLengths(weights, 0).ok());
  EXPECT_FALSE(LimitedHuffmanLengths(weights, 33).ok());
  EXPECT_FALSE(LimitedHuffmanLengths(weights, 1).ok());  // 3 symbols > 2^1
  EXPECT_TRUE(LimitedHuffmanLengths(weights, 2).ok());
  // Exactly 2^L symbols fit, all at length L.
  const std::vector<uint64_t> sixteen(16, 9);
  auto lengths = LimitedHuffmanLengths(sixteen, 4);
  ASSERT_TRUE(lengths.ok());
  EXPECT_EQ(lengths.value(), std::vector<int>(16, 4));
  EXPECT_FALSE(LimitedHuffmanLengths(std::vector<uint64_t>(17, 9), 4).ok());
  // Totals that could overflow a package sum are refused, not miscomputed.
  EXPECT_FALSE(LimitedHuffmanLengths(std::vector<uint64_t>{uint64_t{1} << 60, 1}, 8).ok());
}

TEST(HuffmanProperty, OptimalCompleteAndWithinOneBitOfEntropy) {
  std::mt19937_64 rng(20240611);
  for (int trial = 0; trial < 300; ++trial) {
    const size_t k = 2 + rng() % 300;
    const std::vector<uint64_t> weights = RandomWeights(rng, k, trial % 2 ? 24 : 3);
    const std::vector<int> lengths = HuffmanLengths(weights);
    // An optimal code for two or more symbols is complete: every node of a Huffman tree has two
    // children (Cover & Thomas, section 5.8, from memory).
    EXPECT_TRUE(ComputeKraftSum(lengths).complete()) << "trial " << trial;
    EXPECT_EQ(CodeCostBits(weights, lengths), ReferenceHuffmanCost(weights)) << "trial " << trial;
    // Optimal codes satisfy H <= L < H + 1 (Cover & Thomas, Theorem 5.4.1, from memory;
    // DESIGN.md section 3 lists the same bound).
    const double h = EntropyBits(weights);
    const double mean = MeanBits(weights, lengths);
    EXPECT_GE(mean, h - 1e-12) << "trial " << trial;
    EXPECT_LT(mean, h + 1) << "trial " << trial;
  }
}

TEST(LimitedHuffmanProperty, RespectsTheLimitAndMatchesHuffmanWhenItDoesNotBind) {
  std::mt19937_64 rng(77);
  int binding = 0;
  for (int trial = 0; trial < 300; ++trial) {
    const size_t k = 2 + rng() % 400;
    const std::vector<uint64_t> weights = RandomWeights(rng, k, trial % 3 ? 30 : 4);
    const std::vector<int> huffman = HuffmanLengths(weights);
    const uint64_t optimal = CodeCostBits(weights, huffman);
    const int min_limit = static_cast<int>(std::ceil(std::log2(static_cast<double>(k))));
    uint64_t previous_cost = UINT64_MAX;
    for (int limit = std::max(1, min_limit); limit <= 32; ++limit) {
      auto lengths = LimitedHuffmanLengths(weights, limit);
      ASSERT_TRUE(lengths.ok()) << lengths.error().message;
      const uint64_t cost = CodeCostBits(weights, lengths.value());
      EXPECT_LE(MaxLength(lengths.value()), limit);
      // Kraft (1949): a valid prefix code. Complete as well: in an incomplete code some
      // codeword could be shortened without breaking the limit, so it would not be optimal.
      EXPECT_TRUE(ComputeKraftSum(lengths.value()).complete()) << "trial " << trial;
      EXPECT_GE(cost, optimal);        // the limited problem is a restriction of Huffman's
      EXPECT_LE(cost, previous_cost);  // a looser limit can only help
      if (limit >= MaxLength(huffman)) {
        EXPECT_EQ(cost, optimal) << "trial " << trial;
      }
      if (cost > optimal) ++binding;
      previous_cost = cost;
    }
  }
  EXPECT_GT(binding, 0);  // the skewed cases must actually exercise package-merge
}

TEST(LimitedHuffmanProperty, MatchesBruteForceOnSmallAlphabets) {
  std::mt19937_64 rng(4242);
  int binding = 0;
  for (int trial = 0; trial < 400; ++trial) {
    const size_t k = 2 + rng() % 5;  // 2..6 symbols
    // Small weights (near-ties everywhere) and widely spread ones (limits that bind).
    const std::vector<uint64_t> weights = RandomWeights(rng, k, trial % 2 ? 12 : 3);
    const int min_limit = static_cast<int>(std::ceil(std::log2(static_cast<double>(k))));
    for (int limit = std::max(1, min_limit); limit <= 6; ++limit) {
      auto lengths = LimitedHuffmanLengths(weights, limit);
      ASSERT_TRUE(lengths.ok());
      EXPECT_FALSE(ComputeKraftSum(lengths.value()).over());
      EXPECT_LE(MaxLength(lengths.value()), limit);
      const uint64_t best = BruteForceLimitedCost(weights, limit);
      // Never worse than exhaustion; with Kraft <= 1 it cannot be better either.
      EXPECT_EQ(CodeCostBits(weights, lengths.value()), best)
          << "trial " << trial << " limit " << limit;
      if (best > ReferenceHuffmanCost(weights)) ++binding;
    }
  }
  EXPECT_GT(binding, 0);
}

TEST(LimitedHuffmanProperty, MatchesTextbookPackageMerge) {
  std::mt19937_64 rng(1990);
  int binding = 0;
  for (int trial = 0; trial < 60; ++trial) {
    const size_t k = 7 + rng() % 40;
    const std::vector<uint64_t> weights = RandomWeights(rng, k, trial % 2 ? 30 : 5);
    const int min_limit = static_cast<int>(std::ceil(std::log2(static_cast<double>(k))));
    for (int limit = min_limit; limit <= min_limit + 6; ++limit) {
      auto lengths = LimitedHuffmanLengths(weights, limit);
      ASSERT_TRUE(lengths.ok());
      const uint64_t expected = TextbookPackageMergeCost(weights, limit);
      EXPECT_EQ(CodeCostBits(weights, lengths.value()), expected)
          << "trial " << trial << " limit " << limit;
      if (expected > ReferenceHuffmanCost(weights)) ++binding;
    }
  }
  EXPECT_GT(binding, 50);
}

TEST(HuffmanProperty, LargeAlphabetsMatchTheHeapReference) {
  // Large alphabets take the radix-sorted path; many equal weights test its tie order.
  std::mt19937_64 rng(2048);
  for (size_t k : {2047, 2048, 5000, 65536}) {
    for (int spread : {2, 12}) {  // 12 octaves keep every length within 32 bits
      const std::vector<uint64_t> weights = RandomWeights(rng, k, spread);
      const std::vector<int> lengths = HuffmanLengths(weights);
      ASSERT_LE(MaxLength(lengths), kMaxCodeLength);
      EXPECT_EQ(CodeCostBits(weights, lengths), ReferenceHuffmanCost(weights)) << k;
      EXPECT_TRUE(ComputeKraftSum(lengths).complete()) << k;
      auto limited = LimitedHuffmanLengths(weights, 32);
      ASSERT_TRUE(limited.ok());
      EXPECT_EQ(limited.value(), lengths);  // the limit does not bind: Huffman returned as is
    }
  }
}

TEST(LimitedHuffmanProperty, LargeAlphabet) {
  // 65,536 skewed weights: limits 16..24 all bind (the unrestricted code is deeper).
  std::mt19937_64 rng(65536);
  std::vector<uint64_t> weights(65536);
  for (size_t i = 0; i < weights.size(); ++i) {
    weights[i] = static_cast<uint64_t>(1e12 / std::pow(static_cast<double>(i + 1), 1.5)) + 1;
  }
  std::shuffle(weights.begin(), weights.end(), rng);
  const std::vector<int> huffman = HuffmanLengths(weights);
  ASSERT_GT(MaxLength(huffman), 24);
  uint64_t previous_cost = UINT64_MAX;
  for (int limit : {16, 17, 20, 24}) {
    auto lengths = LimitedHuffmanLengths(weights, limit);
    ASSERT_TRUE(lengths.ok());
    EXPECT_EQ(MaxLength(lengths.value()), limit);
    EXPECT_TRUE(ComputeKraftSum(lengths.value()).complete());
    const uint64_t cost = CodeCostBits(weights, lengths.value());
    EXPECT_GT(cost, CodeCostBits(weights, huffman));
    EXPECT_LE(cost, previous_cost);
    previous_cost = cost;
  }
  // At limit 16 every one of the 2^16 symbols must take exactly 16 bits.
  auto flat = LimitedHuffmanLengths(weights, 16);
  ASSERT_TRUE(flat.ok());
  EXPECT_EQ(flat.value(), std::vector<int>(65536, 16));
}

}  // namespace
}  // namespace codedrift
