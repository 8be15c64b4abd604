#include "codedrift/entropy.h"

#include <cmath>
#include <cstdint>
#include <functional>
#include <numbers>
#include <random>
#include <vector>

#include <gtest/gtest.h>

namespace codedrift {
namespace {

// Exact expectation of f(counts) over all outcomes of N i.i.d. draws from p, each count
// vector weighted by its multinomial probability N! / prod c_i! * prod p_i^c_i.
double ExactExpectation(const std::vector<double>& p, int n,
                        const std::function<double(const std::vector<uint64_t>&)>& f) {
  std::vector<uint64_t> counts(p.size(), 0);
  double expectation = 0;
  std::function<void(size_t, int, double)> visit = [&](size_t i, int left, double log_weight) {
    if (i + 1 == p.size()) {
      counts[i] = static_cast<uint64_t>(left);
      const double lw = log_weight + left * std::log(p[i]) - std::lgamma(left + 1.0);
      expectation += std::exp(lw + std::lgamma(n + 1.0)) * f(counts);
      return;
    }
    for (int c = 0; c <= left; ++c) {
      counts[i] = static_cast<uint64_t>(c);
      visit(i + 1, left - c, log_weight + c * std::log(p[i]) - std::lgamma(c + 1.0));
    }
  };
  visit(0, n, 0.0);
  return expectation;
}

double TrueEntropyBits(const std::vector<double>& p) {
  double h = 0;
  for (double q : p) {
    if (q > 0) h -= q * std::log2(q);
  }
  return h;
}

// Counts of n draws from p (seeded: reproducible).
std::vector<uint64_t> Sample(const std::vector<double>& p, int n, std::mt19937_64& rng) {
  std::discrete_distribution<int> draw(p.begin(), p.end());
  std::vector<uint64_t> counts(p.size(), 0);
  for (int i = 0; i < n; ++i) ++counts[static_cast<size_t>(draw(rng))];
  return counts;
}

TEST(BinaryEntropy, MatchesPublishedTable) {
  // REFERENCES.md "Binary entropy h(p)": values computed to 25 digits from the definition,
  // Cover & Thomas, Elements of Information Theory, eq. 2.5. Relative tolerance 1e-12.
  const struct {
    double p;
    double h;
  } kTable[] = {
      {0.01, 0.08079313589591117},
      {0.1, 0.4689955935892812},
      {0.11, 0.499915958164528},
      {0.25, 0.8112781244591329},
      {1.0 / 3, 0.9182958340544895},
      {0.4, 0.9709505944546686},
      {0.5, 1.0},
  };
  for (const auto& row : kTable) {
    EXPECT_NEAR(BinaryEntropyBits(row.p), row.h, 1e-12 * row.h) << "p = " << row.p;
    // h(p) = h(1 - p), same source.
    EXPECT_NEAR(BinaryEntropyBits(1 - row.p), row.h, 1e-12 * row.h) << "p = 1 - " << row.p;
  }
  EXPECT_EQ(BinaryEntropyBits(0), 0);
  EXPECT_EQ(BinaryEntropyBits(1), 0);
}

TEST(PluginEntropy, MatchesTextbookHuffmanExamples) {
  // Haykin, Communication Systems, Example 9.3 (also Sayood): p = (0.4, 0.2, 0.2, 0.1, 0.1).
  EXPECT_NEAR(PluginEntropyBits(std::vector<uint64_t>{4, 2, 2, 1, 1}), 2.121928094887362,
              1e-12 * 2.121928094887362);
  // Cover & Thomas, 2nd ed., Example 5.6.1: p = (0.25, 0.25, 0.2, 0.15, 0.15), 9 digits given.
  EXPECT_NEAR(PluginEntropyBits(std::vector<uint64_t>{5, 5, 4, 3, 3}), 2.285475297, 5e-10);
  // Haykin: p = (0.1, 0.1, 0.2, 0.1, 0.1, 0.2, 0.1, 0.1).
  EXPECT_NEAR(PluginEntropyBits(std::vector<uint64_t>{1, 1, 2, 1, 1, 2, 1, 1}), 2.921928094887362,
              1e-12 * 2.921928094887362);
  // Haykin, extended source: p = (0.7, 0.15, 0.15), H = 1.181290899 (9 digits given).
  EXPECT_NEAR(PluginEntropyBits(std::vector<uint64_t>{14, 3, 3}), 1.181290899, 5e-10);
  // REFERENCES.md binary example p = (0.9, 0.1): H = 0.4689956 (7 digits given).
  EXPECT_NEAR(PluginEntropyBits(std::vector<uint64_t>{9, 1}), 0.4689956, 5e-8);
}

TEST(PluginEntropy, StaysAccurateAtWindowScaleCounts) {
  // Haykin Example 9.3 again, with counts of a long window: only p matters, so H must not
  // drift as counts grow (this is what the long-double compensated sum is for).
  const std::vector<uint64_t> counts = {4'000'000'000'000, 2'000'000'000'000, 2'000'000'000'000,
                                        1'000'000'000'000, 1'000'000'000'000};
  EXPECT_NEAR(PluginEntropyBits(counts), 2.121928094887362, 1e-12 * 2.121928094887362);

  // A uniform distribution over 2^16 symbols has H = 16 bits and zero variance (definition:
  // Cover & Thomas, Theorem 2.6.4, from memory).
  const std::vector<uint64_t> uniform(65536, 1'000'003);
  const EntropyEstimate estimate = EstimateEntropy(uniform);
  EXPECT_NEAR(estimate.plugin_bits, 16.0, 1e-12 * 16);
  EXPECT_GE(estimate.stderr_bits, 0.0);
  EXPECT_LT(estimate.stderr_bits, 1e-9);
}

TEST(PluginEntropy, SingleSymbolIsExactlyZero) {
  // One symbol: p = 1, H = 0 exactly (definition), whatever its count.
  for (uint64_t n : {uint64_t{1}, uint64_t{7}, uint64_t{1'000'000'007}, uint64_t{1} << 60}) {
    const std::vector<uint64_t> counts = {0, n, 0};
    const EntropyEstimate estimate = EstimateEntropy(counts);
    EXPECT_EQ(estimate.plugin_bits, 0.0) << n;
    EXPECT_EQ(estimate.miller_madow_bits, 0.0) << n;  // (K - 1) = 0
    EXPECT_EQ(estimate.stderr_bits, 0.0) << n;
    EXPECT_EQ(estimate.symbols, n);
    EXPECT_EQ(estimate.distinct, 1u);
  }
  const EntropyEstimate empty = EstimateEntropy(std::vector<uint64_t>{0, 0});
  EXPECT_EQ(empty.symbols, 0u);
  EXPECT_EQ(empty.plugin_bits, 0.0);
}

TEST(MillerMadow, MatchesRPackageEntropyExample) {
  // Miller 1955, as implemented by entropy.MillerMadow in the R package `entropy`
  // (REFERENCES.md "Estimators"): N = 19, 8 nonzero bins.
  const std::vector<uint64_t> counts = {4, 2, 3, 0, 2, 4, 0, 0, 2, 1, 1};
  const EntropyEstimate estimate = EstimateEntropy(counts);
  EXPECT_EQ(estimate.symbols, 19u);
  EXPECT_EQ(estimate.distinct, 8u);
  EXPECT_NEAR(estimate.plugin_bits, 2.839775539645508, 1e-12 * 2.839775539645508);
  EXPECT_NEAR(estimate.miller_madow_bits, 3.105535152440844, 1e-12 * 3.105535152440844);
}

TEST(StandardError, MatchesAsymptoticVarianceOfPluginEstimator) {
  // Basharin 1959; Paninski 2003, Neural Computation 15(6) (from memory): Var[H] ~ sigma^2 / N
  // with sigma^2 = sum p (log2 p)^2 - H^2. So stderr^2 * N must equal sigma^2.
  const std::vector<uint64_t> haykin = {4, 2, 2, 1, 1};  // p = (0.4, 0.2, 0.2, 0.1, 0.1)
  const EntropyEstimate a = EstimateEntropy(haykin);
  EXPECT_NEAR(a.stderr_bits * a.stderr_bits * 10, 0.56, 1e-12);

  const std::vector<uint64_t> dyadic = {4, 2, 1, 1};  // p = (1/2, 1/4, 1/8, 1/8)
  const EntropyEstimate b = EstimateEntropy(dyadic);
  EXPECT_NEAR(b.plugin_bits, 1.75, 1e-15);
  EXPECT_NEAR(b.stderr_bits * b.stderr_bits * 8, 11.0 / 16, 1e-12);
}

TEST(Estimators, ExactExpectationForTwoFairCoinFlips) {
  // REFERENCES.md "Exact small case": p = (1/2, 1/2), N = 2. Outcomes (2,0), (1,1), (0,2) with
  // probabilities 1/4, 1/2, 1/4 (binomial): E[H] = 0.5, E[H_MM] = 0.6803368801.
  const std::vector<double> p = {0.5, 0.5};
  const double plugin = ExactExpectation(
      p, 2, [](const std::vector<uint64_t>& c) { return EstimateEntropy(c).plugin_bits; });
  const double mm = ExactExpectation(
      p, 2, [](const std::vector<uint64_t>& c) { return EstimateEntropy(c).miller_madow_bits; });
  EXPECT_NEAR(plugin, 0.5, 1e-12);
  EXPECT_NEAR(mm, 0.6803368801, 1e-10);
}

TEST(Estimators, PluginBiasWithinPaninskiBoundExactly) {
  // Paninski 2003 (from memory): -log2(1 + (m - 1) / N) <= E[H] - H <= 0, here in bits, with m
  // the support size. Checked by exact enumeration of small invented cases.
  const struct {
    std::vector<double> p;
    int n;
  } kCases[] = {
      {{0.5, 0.3, 0.2}, 5},
      {{0.25, 0.25, 0.25, 0.25}, 3},
      {{0.7, 0.1, 0.1, 0.1}, 10},
      {{0.4, 0.2, 0.2, 0.1, 0.1}, 8},
      {{0.9, 0.1}, 1},
  };
  for (const auto& c : kCases) {
    const double bias = ExactExpectation(c.p, c.n,
                                         [](const std::vector<uint64_t>& counts) {
                                           return PluginEntropyBits(counts);
                                         }) -
                        TrueEntropyBits(c.p);
    const double m = static_cast<double>(c.p.size());
    EXPECT_LE(bias, 1e-12) << "N = " << c.n;
    EXPECT_GE(bias, -std::log2(1 + (m - 1) / c.n) - 1e-12) << "N = " << c.n;
  }
}

TEST(Estimators, PluginBiasWithinPaninskiBoundSimulated) {
  // Same bound (Paninski 2003, from memory) on larger alphabets than enumeration allows:
  // invented seeded sources, bounds widened by four standard errors of the simulated mean.
  std::mt19937_64 rng(20240517);
  const struct {
    int m;
    int n;
  } kCases[] = {{20, 15}, {50, 100}, {256, 300}};
  for (const auto& c : kCases) {
    std::vector<double> p(static_cast<size_t>(c.m));
    for (int i = 0; i < c.m; ++i) p[static_cast<size_t>(i)] = 1.0 / (i + 1);  // Zipf-like
    double total = 0;
    for (double q : p) total += q;
    for (double& q : p) q /= total;
    const double h = TrueEntropyBits(p);
    constexpr int kTrials = 2000;
    double sum = 0;
    double sum_sq = 0;
    for (int t = 0; t < kTrials; ++t) {
      const double error = PluginEntropyBits(Sample(p, c.n, rng)) - h;
      sum += error;
      sum_sq += error * error;
    }
    const double mean = sum / kTrials;
    const double sem = std::sqrt((sum_sq / kTrials - mean * mean) / kTrials);
    EXPECT_LE(mean, 4 * sem) << "m = " << c.m << ", N = " << c.n;
    EXPECT_GE(mean, -std::log2(1.0 + (c.m - 1.0) / c.n) - 4 * sem)
        << "m = " << c.m << ", N = " << c.n;
  }
}

TEST(Estimators, MillerMadowLessBiasedThanPluginOnSmallSamples) {
  // Miller 1955's correction removes the leading (m - 1) / (2 N ln 2) term of the plug-in
  // bias, so on small samples its mean error must be smaller. Invented seeded sources.
  std::mt19937_64 rng(7);
  const struct {
    std::vector<double> p;
    int n;
  } kCases[] = {
      {{0.4, 0.2, 0.2, 0.1, 0.1}, 10},
      {{0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125}, 16},
      {{0.5, 0.2, 0.1, 0.05, 0.05, 0.04, 0.03, 0.02, 0.01}, 40},
  };
  for (const auto& c : kCases) {
    const double h = TrueEntropyBits(c.p);
    constexpr int kTrials = 5000;
    double plugin_error = 0;
    double mm_error = 0;
    for (int t = 0; t < kTrials; ++t) {
      const EntropyEstimate estimate = EstimateEntropy(Sample(c.p, c.n, rng));
      plugin_error += estimate.plugin_bits - h;
      mm_error += estimate.miller_madow_bits - h;
    }
    EXPECT_LT(std::fabs(mm_error / kTrials), std::fabs(plugin_error / kTrials)) << "N = " << c.n;
    EXPECT_LT(plugin_error, 0) << "plug-in is biased low (Paninski 2003, from memory)";
  }
}

TEST(TooFewSymbols, FollowsTheTenPerSymbolRule) {
  // DESIGN.md section 3: warn when N < 10 K.
  EXPECT_TRUE(TooFewSymbols(99, 10));
  EXPECT_FALSE(TooFewSymbols(100, 10));
  EXPECT_FALSE(TooFewSymbols(1'000'000, 256));
  EXPECT_TRUE(TooFewSymbols(0, 0));  // nothing to estimate from
  // 10 K would overflow 64 bits; the rule must still hold.
  EXPECT_TRUE(TooFewSymbols(UINT64_MAX, UINT64_MAX / 5));
  EXPECT_FALSE(TooFewSymbols(UINT64_MAX, UINT64_MAX / 10 - 1));
}

}  // namespace
}  // namespace codedrift
