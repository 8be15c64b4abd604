// Internal to the Huffman builders: the nonzero weights in ascending order and the Huffman
// depths of such a sorted list. Shared by huffman.cc and package_merge.cc so the limited
// builder sorts once and reuses the unrestricted result when it already fits.
#pragma once

#include <cstdint>
#include <span>
#include <vector>

namespace codedrift::internal {

// The nonzero weights, ascending, ties by symbol index; symbols[i] is the index of weights[i]
// in the caller's span. A plain value.
struct SortedWeights {
  std::vector<uint64_t> weights;
  std::vector<uint32_t> symbols;
};

SortedWeights SortNonzeroWeights(std::span<const uint64_t> weights);

// Optimal (Huffman) depths for ascending weights, in the same order, by the two-queue method.
// Leaves win ties against merged nodes, which keeps the tree as shallow as an optimal tree can
// be. Needs weights.size() >= 2.
std::vector<int> HuffmanDepthsOfSorted(std::span<const uint64_t> weights);

// Scatters depths in sorted order back to the caller's symbol order (zeros elsewhere).
std::vector<int> ScatterLengths(const SortedWeights& sorted, std::span<const int> depths,
                                size_t symbol_count);

}  // namespace codedrift::internal
