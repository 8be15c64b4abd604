// Canonical codewords from lengths (RFC 1951 section 3.2.2) and the exact Kraft sum.
#pragma once

#include <cstdint>
#include <span>
#include <string>
#include <vector>

namespace codedrift {

inline constexpr int kMaxCodeLength = 32;

// One codeword: the low `length` bits of `bits`, most significant first.
struct Codeword {
  uint32_t bits = 0;
  int length = 0;  // 0: the symbol has no codeword
  std::string ToString() const;  // e.g. "0110"
};

// Codewords for lengths given in symbol order: shorter lengths first, ties by symbol order.
// Lengths must be 0..32 and satisfy Kraft (sum 2^-l <= 1); otherwise the result is unspecified.
std::vector<Codeword> CanonicalCodewords(std::span<const int> lengths);

// Kraft sum computed exactly: numerator / 2^32 (lengths 1..32; zero lengths skipped).
struct KraftSum {
  unsigned __int128 numerator = 0;  // in units of 2^-32
  double value() const;
  bool complete() const;  // == 1
  bool over() const;      // > 1 (not a prefix code)
};
KraftSum ComputeKraftSum(std::span<const int> lengths);

}  // namespace codedrift
