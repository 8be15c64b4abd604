#include "codedrift/huffman.h"

#include <algorithm>
#include <utility>

#include "sorted_weights.h"

namespace codedrift {
namespace internal {

namespace {

// Below this many symbols a comparison sort beats clearing radix histograms.
constexpr size_t kRadixSortMinSize = 2048;

// Stable LSD radix sort by key, 11 bits per pass; digits that every key shares are skipped,
// so typical counts (well under 2^44) take four passes or fewer. Stability keeps equal keys in
// their incoming (ascending symbol) order.
void RadixSortByKey(std::vector<uint64_t>& keys, std::vector<uint32_t>& symbols) {
  constexpr int kDigitBits = 11;
  constexpr uint64_t kDigitMask = (uint64_t{1} << kDigitBits) - 1;
  const size_t n = keys.size();
  std::vector<uint64_t> keys_out(n);
  std::vector<uint32_t> symbols_out(n);
  std::vector<uint32_t> start(kDigitMask + 1);
  uint64_t any_bits = 0;
  for (uint64_t key : keys) any_bits |= key;
  for (int shift = 0; shift < 64 && (any_bits >> shift) != 0; shift += kDigitBits) {
    std::fill(start.begin(), start.end(), 0);
    for (uint64_t key : keys) ++start[(key >> shift) & kDigitMask];
    if (start[(keys[0] >> shift) & kDigitMask] == n) continue;  // one digit value: no change
    uint32_t position = 0;
    for (uint32_t& bucket : start) position += std::exchange(bucket, position);
    for (size_t i = 0; i < n; ++i) {
      const uint32_t at = start[(keys[i] >> shift) & kDigitMask]++;
      keys_out[at] = keys[i];
      symbols_out[at] = symbols[i];
    }
    keys.swap(keys_out);
    symbols.swap(symbols_out);
  }
}

}  // namespace

SortedWeights SortNonzeroWeights(std::span<const uint64_t> weights) {
  SortedWeights sorted;
  sorted.weights.reserve(weights.size());
  sorted.symbols.reserve(weights.size());
  for (size_t i = 0; i < weights.size(); ++i) {
    if (weights[i] == 0) continue;
    sorted.weights.push_back(weights[i]);
    sorted.symbols.push_back(static_cast<uint32_t>(i));
  }
  if (sorted.weights.size() >= kRadixSortMinSize) {
    RadixSortByKey(sorted.weights, sorted.symbols);
    return sorted;
  }
  // Pairs compare by weight, then by index: the same order the stable radix sort gives.
  std::vector<std::pair<uint64_t, uint32_t>> pairs(sorted.weights.size());
  for (size_t i = 0; i < pairs.size(); ++i) pairs[i] = {sorted.weights[i], sorted.symbols[i]};
  std::sort(pairs.begin(), pairs.end());
  for (size_t i = 0; i < pairs.size(); ++i) {
    sorted.weights[i] = pairs[i].first;
    sorted.symbols[i] = pairs[i].second;
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
