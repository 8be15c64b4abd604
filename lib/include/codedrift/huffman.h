// Optimal prefix-code lengths: Huffman, and length-limited Huffman by package-merge
// (Larmore & Hirschberg 1990). Both are O(K log K) or O(K L); run per evaluation interval.
#pragma once

#include <cstdint>
#include <span>
#include <vector>

#include "codedrift/result.h"

namespace codedrift {

// Optimal codeword lengths for the weights, in the same order. Zero weights get length 0 (no
// codeword). A single nonzero weight gets length 1.
std::vector<int> HuffmanLengths(std::span<const uint64_t> weights);

// Optimal lengths subject to every length <= max_length (1..32). Error when the nonzero
// weights outnumber 2^max_length.
Result<std::vector<int>> LimitedHuffmanLengths(std::span<const uint64_t> weights, int max_length);

// Sum of weight * length.
uint64_t CodeCostBits(std::span<const uint64_t> weights, std::span<const int> lengths);

}  // namespace codedrift
