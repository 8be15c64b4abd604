#include "codedrift/huffman.h"

#include <algorithm>
#include <utility>

#include "sorted_weights.h"

namespace codedrift {
namespace internal {

SortedWeights SortNonzeroWeights(std::span<const uint64_t> weights) {
  std::vector<std::pair<uint64_t, uint32_t>> pairs;
  pairs.reserve(weights.size());
  for (size_t i = 0; i < weights.size(); ++i) {
    if (weights[i] != 0) pairs.emplace_back(weights[i], static_cast<uint32_t>(i));
  }
  // Pairs compare by weight, then by index: a deterministic order for equal weights.
  std::sort(pairs.begin(), pairs.end());
  SortedWeights sorted;
  sorted.weights.reserve(pairs.size());
  sorted.symbols.reserve(pairs.size());
  for (const auto& [weight, symbol] : pairs) {
    sorted.weights.push_back(weight);
    sorted.symbols.push_back(symbol);
  }
  return sorted;
}

std::vector<int> HuffmanDepthsOfSorted(std::span<const uint64_t> weights) {
  // Two queues (van Leeuwen 1976): the sorted leaves, and the merged nodes, which are created
  // in non-decreasing weight order, so the smallest node is always at one of the two fronts.
  // Node ids: leaves 0..n-1, merged node t is n + t; a parent's id exceeds its children's.
  const size_t n = weights.size();
  std::vector<uint64_t> merged(n - 1);
  std::vector<uint32_t> parent(2 * n - 1);
  size_t next_leaf = 0;
  size_t next_merged = 0;
  for (size_t t = 0; t + 1 < n; ++t) {
    uint64_t sum = 0;
    for (int pick = 0; pick < 2; ++pick) {
      const bool take_leaf =
          next_leaf < n && (next_merged == t || weights[next_leaf] <= merged[next_merged]);
      if (take_leaf) {
        sum += weights[next_leaf];
        parent[next_leaf++] = static_cast<uint32_t>(n + t);
      } else {
        sum += merged[next_merged];
        parent[n + next_merged++] = static_cast<uint32_t>(n + t);
      }
    }
    merged[t] = sum;
  }
  // Depths top-down: the root is the last node; every parent is visited before its children.
  std::vector<int> depth(2 * n - 1, 0);
  for (size_t node = 2 * n - 2; node-- > 0;) depth[node] = depth[parent[node]] + 1;
  depth.resize(n);
  return depth;
}

std::vector<int> ScatterLengths(const SortedWeights& sorted, std::span<const int> depths,
                                size_t symbol_count) {
  std::vector<int> lengths(symbol_count, 0);
  for (size_t i = 0; i < depths.size(); ++i) lengths[sorted.symbols[i]] = depths[i];
  return lengths;
}

}  // namespace internal

std::vector<int> HuffmanLengths(std::span<const uint64_t> weights) {
  const internal::SortedWeights sorted = internal::SortNonzeroWeights(weights);
  if (sorted.weights.size() <= 1) {
    // No tree to build: one symbol still needs a one-bit codeword to be sent at all.
    std::vector<int> lengths(weights.size(), 0);
    if (!sorted.symbols.empty()) lengths[sorted.symbols[0]] = 1;
    return lengths;
  }
  return internal::ScatterLengths(sorted, internal::HuffmanDepthsOfSorted(sorted.weights),
                                  weights.size());
}

uint64_t CodeCostBits(std::span<const uint64_t> weights, std::span<const int> lengths) {
  const size_t n = std::min(weights.size(), lengths.size());
  uint64_t bits = 0;
  for (size_t i = 0; i < n; ++i) bits += weights[i] * static_cast<uint64_t>(lengths[i]);
  return bits;
}

}  // namespace codedrift
