// Optimal prefix-code lengths: Huffman, and length-limited Huffman by package-merge
// (Larmore & Hirschberg 1990). Both are O(K log K) or O(K L); run per evaluation interval.
// Free functions over plain values; no shared state, safe to call from any thread.
#pragma once

#include <cstdint>
#include <span>
#include <vector>

#include "codedrift/result.h"

namespace codedrift {

// Optimal codeword lengths for the weights, in the same order. Zero weights get length 0 (no
// codeword). A single nonzero weight gets length 1. Among optimal codes it picks the one that
// merges leaves before equal-weight subtrees (the minimum-variance, shortest-maximum choice).
// The weights' total must stay below 2^64. Lengths can exceed kMaxCodeLength (32) when the
// weights span a huge range (a Fibonacci-like profile needs K - 1); LimitedHuffmanLengths
// gives lengths that CanonicalCodewords can assign.
std::vector<int> HuffmanLengths(std::span<const uint64_t> weights);

// Optimal lengths subject to every length <= max_length (1..32). Error when max_length is out
// of range, when the nonzero weights outnumber 2^max_length, or when their total reaches 2^58
// (package sums must not overflow). Returns the Huffman lengths when they already fit.
Result<std::vector<int>> LimitedHuffmanLengths(std::span<const uint64_t> weights, int max_length);

// Sum of weight * length over the common prefix of the two spans (callers pass equal sizes).
uint64_t CodeCostBits(std::span<const uint64_t> weights, std::span<const int> lengths);

}  // namespace codedrift
