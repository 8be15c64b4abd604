// Code construction cost: length-limited Huffman (package-merge) against plain Huffman on the
// same weights in the same run, and canonical codeword assignment. Runs once per evaluation
// interval in the daemon, so the goal is "well under a millisecond" at 256 symbols and tens of
// milliseconds at most at 65,536.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <random>
#include <vector>

#include <benchmark/benchmark.h>

#include "codedrift/canonical_code.h"
#include "codedrift/huffman.h"

namespace codedrift {
namespace {

// Invented Zipf-like weights (exponent 1.5) in a seeded random order. Steep enough that the
// unrestricted code is deeper than every limit benchmarked below except 15 at K = 256, so
// package-merge really runs.
std::vector<uint64_t> ZipfWeights(size_t k) {
  std::vector<uint64_t> weights(k);
  for (size_t i = 0; i < k; ++i) {
    weights[i] = static_cast<uint64_t>(std::ldexp(1.0, 44) / std::pow(i + 1.0, 1.5)) + 1;
  }
  std::mt19937_64 rng(k);
  std::shuffle(weights.begin(), weights.end(), rng);
  return weights;
}

void BM_Huffman_Build(benchmark::State& state) {
  const std::vector<uint64_t> weights = ZipfWeights(static_cast<size_t>(state.range(0)));
  for (auto _ : state) benchmark::DoNotOptimize(HuffmanLengths(weights));
  const std::vector<int> lengths = HuffmanLengths(weights);
  state.counters["max_length"] = *std::max_element(lengths.begin(), lengths.end());
}
BENCHMARK(BM_Huffman_Build)->Arg(256)->Arg(65536)->Unit(benchmark::kMicrosecond);

void BM_LimitedHuffman_Build(benchmark::State& state) {
  const std::vector<uint64_t> weights = ZipfWeights(static_cast<size_t>(state.range(0)));
  const int limit = static_cast<int>(state.range(1));
  for (auto _ : state) benchmark::DoNotOptimize(LimitedHuffmanLengths(weights, limit));
  const std::vector<int> huffman = HuffmanLengths(weights);
  // 1 when package-merge ran; 0 when the Huffman lengths already fit and were returned.
  state.counters["binds"] = *std::max_element(huffman.begin(), huffman.end()) > limit;
}
BENCHMARK(BM_LimitedHuffman_Build)
    ->Args({256, 9})
    ->Args({256, 12})
    ->Args({256, 15})
    ->Args({65536, 16})
    ->Args({65536, 20})
    ->Args({65536, 24})
    ->Unit(benchmark::kMicrosecond);

void BM_Canonical_Codewords(benchmark::State& state) {
  const std::vector<int> lengths = HuffmanLengths(ZipfWeights(static_cast<size_t>(state.range(0))));
  for (auto _ : state) benchmark::DoNotOptimize(CanonicalCodewords(lengths));
}
BENCHMARK(BM_Canonical_Codewords)->Arg(256)->Arg(65536)->Unit(benchmark::kMicrosecond);

}  // namespace
}  // namespace codedrift
