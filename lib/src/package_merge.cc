// Length-limited Huffman lengths by package-merge (Larmore & Hirschberg, J. ACM 37(3), 1990),
// in its coin-collector form: every symbol is a coin at each depth 1..L with face value 2^-d
// and numismatic value its weight; an optimal code is the cheapest set of coins worth n - 1,
// and a symbol's length is the number of its coins in that set.
#include <algorithm>
#include <bit>
#include <cstdint>
#include <limits>
#include <string>
#include <utility>

#include "codedrift/huffman.h"

#include "sorted_weights.h"

namespace codedrift {
namespace {

// Package sums count a weight at most once per depth, so a total below 2^58 keeps every sum
// of up to 32 depths below 2^63 and the sentinel above all of them.
constexpr uint64_t kMaxTotalWeight = uint64_t{1} << 58;
constexpr uint64_t kSentinel = std::numeric_limits<uint64_t>::max();

// Depths for ascending weights (n >= 2, n <= 2^max_length), in the same order.
//
// Forward pass, deepest depth first: the list at depth L is the leaves; the list at depth d is
// the leaves merged with the pairs ("packages") of the list at depth d + 1. Only one bit per
// list entry is kept (leaf or package), so memory is O(n L) bits, with no per-package nodes.
// Backward pass: take the 2n - 2 cheapest entries at depth 1; the packages among them expand
// to twice as many entries at the next depth, and so on. The leaves taken at each depth are a
// prefix of the sorted leaves (leaves enter every list in order), so a symbol's length is the
// number of depths whose taken prefix covers it.
std::vector<int> PackageMergeDepths(std::span<const uint64_t> weights, int max_length) {
  const size_t n = weights.size();
  std::vector<uint64_t> leaves(weights.begin(), weights.end());
  leaves.push_back(kSentinel);
  std::vector<uint64_t> below(weights.begin(), weights.end());  // the list at depth d + 1
  std::vector<uint64_t> current;
  below.reserve(2 * n + 1);
  current.reserve(2 * n + 1);

  std::vector<uint64_t> is_package;  // one bit per entry; each depth's list starts a new word
  is_package.reserve((2 * n / 64 + 1) * static_cast<size_t>(max_length));
  std::vector<size_t> list_start(max_length + 1, 0);  // first word of each depth's list
  for (int depth = max_length - 1; depth >= 1; --depth) {
    // Pair up the list below in place (entry k reads entries 2k and 2k + 1 >= k).
    const size_t packages = below.size() / 2;
    for (size_t k = 0; k < packages; ++k) below[k] = below[2 * k] + below[2 * k + 1];
    below.resize(packages);
    below.push_back(kSentinel);

    const size_t size = n + packages;
    current.resize(size);
    list_start[depth] = is_package.size();
    size_t leaf = 0;
    size_t package = 0;
    uint64_t word = 0;
    for (size_t out = 0; out < size; ++out) {
      // Branch-free merge; a leaf wins a tie, and the sentinels stop either run.
      const uint64_t leaf_weight = leaves[leaf];
      const uint64_t package_weight = below[package];
      const bool take_leaf = leaf_weight <= package_weight;
      current[out] = take_leaf ? leaf_weight : package_weight;
      word |= static_cast<uint64_t>(!take_leaf) << (out % 64);
      if (out % 64 == 63) {
        is_package.push_back(word);
        word = 0;
      }
      leaf += take_leaf;
      package += !take_leaf;
    }
    if (size % 64 != 0) is_package.push_back(word);
    std::swap(below, current);
  }

  // Each depth adds one to the length of every leaf in its taken prefix: mark the prefix ends
  // here, and sum them up below.
  std::vector<int> covered(n + 1, 0);
  size_t taken = 2 * n - 2;
  for (int depth = 1; depth < max_length; ++depth) {
    const uint64_t* bits = is_package.data() + list_start[depth];
    size_t packages = 0;
    for (size_t w = 0; w < taken / 64; ++w) packages += std::popcount(bits[w]);
    if (taken % 64 != 0) {
      packages += std::popcount(bits[taken / 64] & ((uint64_t{1} << (taken % 64)) - 1));
    }
    ++covered[0];
    --covered[taken - packages];
    taken = 2 * packages;
  }
  ++covered[0];
  --covered[taken];  // depth L holds only leaves

  std::vector<int> depths(n);
  int running = 0;
  for (size_t i = 0; i < n; ++i) {
    running += covered[i];
    depths[i] = running;
  }
  return depths;
}

}  // namespace

Result<std::vector<int>> LimitedHuffmanLengths(std::span<const uint64_t> weights, int max_length) {
  if (max_length < 1 || max_length > 32) {
    return Error{"max_length must be from 1 to 32, got " + std::to_string(max_length)};
  }
  const internal::SortedWeights sorted = internal::SortNonzeroWeights(weights);
  const size_t n = sorted.weights.size();
  if (n > (uint64_t{1} << max_length)) {
    return Error{std::to_string(n) + " symbols do not fit in codewords of at most " +
                 std::to_string(max_length) + " bits"};
  }
  uint64_t total = 0;
  for (uint64_t weight : sorted.weights) {
    total += weight;
    if (weight >= kMaxTotalWeight || total >= kMaxTotalWeight) {
      return Error{"weights total 2^58 or more; scale them down before building a code"};
    }
  }
  if (n <= 1) return HuffmanLengths(weights);

  std::vector<int> depths = internal::HuffmanDepthsOfSorted(sorted.weights);
  if (*std::max_element(depths.begin(), depths.end()) > max_length) {
    depths = PackageMergeDepths(sorted.weights, max_length);
  }
  return internal::ScatterLengths(sorted, depths, weights.size());
}

}  // namespace codedrift
