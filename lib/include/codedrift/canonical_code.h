// Canonical codewords from lengths (RFC 1951 section 3.2.2) and the exact Kraft sum.
// Free functions over plain values; no shared state, safe to call from any thread.
#pragma once

#include <cstdint>
#include <span>
#include <string>
#include <vector>

namespace codedrift {

inline constexpr int kMaxCodeLength = 32;

// `__extension__` keeps -Wpedantic quiet about the GCC/Clang 128-bit integer: a Kraft sum of
// up to 2^32 codewords at 2^-32 granularity needs more than 64 bits to be exact.
__extension__ typedef unsigned __int128 KraftNumerator;

// One codeword: the low `length` bits of `bits`, most significant first.
struct Codeword {
  uint32_t bits = 0;
  int length = 0;                // 0: the symbol has no codeword
  std::string ToString() const;  // e.g. "0110"; empty for length 0
};

// Codewords for lengths given in symbol order: shorter lengths first, ties by symbol order.
// Lengths must be 0..32 and satisfy Kraft (sum 2^-l <= 1); otherwise the result is unspecified
// (lengths outside 0..32 get no codeword).
std::vector<Codeword> CanonicalCodewords(std::span<const int> lengths);

// Kraft sum computed exactly: numerator / 2^32 (lengths 1..32; zero lengths skipped).
struct KraftSum {
  KraftNumerator numerator = 0;  // in units of 2^-32
  double value() const;          // nearest double, for display only
  bool complete() const;         // == 1
  bool over() const;             // > 1 (not a prefix code)
};
// Lengths outside 0..32 are the caller's error and are skipped (validate before calling).
KraftSum ComputeKraftSum(std::span<const int> lengths);

}  // namespace codedrift
