// Entropy estimators over a histogram (log base 2, bits per symbol). O(K) per call: run per
// evaluation interval, never per symbol.
#pragma once

#include <cstdint>
#include <span>

namespace codedrift {

// Figures for one histogram. Zero counts are ignored.
struct EntropyEstimate {
  uint64_t symbols = 0;          // N
  uint64_t distinct = 0;         // K, symbols with a nonzero count
  double plugin_bits = 0;        // H = log2 N - (sum c log2 c) / N
  double miller_madow_bits = 0;  // H + (K - 1) / (2 N ln 2)
  double stderr_bits = 0;        // sqrt((sum p (log2 p)^2 - H^2) / N), i.i.d. delta method
};

EntropyEstimate EstimateEntropy(std::span<const uint64_t> counts);
double PluginEntropyBits(std::span<const uint64_t> counts);

// Binary entropy h(p) in bits; h(0) = h(1) = 0.
double BinaryEntropyBits(double p);

// True when N is too small for a K-symbol alphabet to give a trustworthy estimate
// (N < 10 K, a common rule of thumb).
bool TooFewSymbols(uint64_t symbols, uint64_t distinct);

}  // namespace codedrift
