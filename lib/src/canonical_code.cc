#include "codedrift/canonical_code.h"

#include <array>

namespace codedrift {
namespace {

constexpr KraftNumerator kKraftOne = KraftNumerator{1} << kMaxCodeLength;

bool ValidLength(int length) { return length >= 1 && length <= kMaxCodeLength; }

}  // namespace

std::string Codeword::ToString() const {
  std::string text;
  text.reserve(length > 0 ? static_cast<size_t>(length) : 0);
  for (int bit = length - 1; bit >= 0; --bit) text.push_back(((bits >> bit) & 1u) ? '1' : '0');
  return text;
}

std::vector<Codeword> CanonicalCodewords(std::span<const int> lengths) {
  // RFC 1951 section 3.2.2, steps 1-3. Codes are computed in 64 bits: with 32-bit codewords
  // the running code can reach 2^32 just past the last length.
  std::array<uint64_t, kMaxCodeLength + 1> bl_count{};
  for (int length : lengths) {
    if (ValidLength(length)) ++bl_count[length];
  }
  std::array<uint64_t, kMaxCodeLength + 1> next_code{};
  uint64_t code = 0;
  for (int bits = 1; bits <= kMaxCodeLength; ++bits) {
    code = (code + bl_count[bits - 1]) << 1;
    next_code[bits] = code;
  }
  std::vector<Codeword> codewords(lengths.size());
  for (size_t symbol = 0; symbol < lengths.size(); ++symbol) {
    const int length = lengths[symbol];
    if (!ValidLength(length)) continue;
    codewords[symbol].bits = static_cast<uint32_t>(next_code[length]++);
    codewords[symbol].length = length;
  }
  return codewords;
}

double KraftSum::value() const {
  return static_cast<double>(numerator) / static_cast<double>(kKraftOne);
}

bool KraftSum::complete() const { return numerator == kKraftOne; }

bool KraftSum::over() const { return numerator > kKraftOne; }

KraftSum ComputeKraftSum(std::span<const int> lengths) {
  KraftSum sum;
  for (int length : lengths) {
    if (ValidLength(length)) sum.numerator += KraftNumerator{1} << (kMaxCodeLength - length);
  }
  return sum;
}

}  // namespace codedrift
