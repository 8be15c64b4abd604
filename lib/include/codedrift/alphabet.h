// Alphabet: what a symbol is (a byte, an n-byte block, a token, a bit field), and how a
// symbol's key is written in code tables, JSON and metrics.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>

#include "codedrift/result.h"

namespace codedrift {

// A symbol's identity, independent of any numbering: the raw bytes for `bytes` (n bytes for
// blocks), the token text for `tokens`, and the value as 8 big-endian bytes for `field`.
// Reserved token keys: "\n" is the end-of-record symbol, "" the overflow symbol (tokens are
// never empty and never contain a newline, so neither can collide with a real token).
using SymbolKey = std::string;

inline constexpr std::string_view kEndOfRecordToken = "\n";
inline constexpr std::string_view kOverflowToken = "";

enum class AlphabetKind { kBytes, kTokens, kField };

// Describes a symbol alphabet. Cheap to copy; immutable after construction.
struct Alphabet {
  AlphabetKind kind = AlphabetKind::kBytes;
  int block = 1;        // bytes: symbols are `block`-byte groups (1..4)
  int width_bits = 0;   // field: bits per value (1..32)

  static Alphabet Bytes(int block = 1) { return {AlphabetKind::kBytes, block, 0}; }
  static Alphabet Tokens() { return {AlphabetKind::kTokens, 1, 0}; }
  static Alphabet Field(int width_bits) { return {AlphabetKind::kField, 1, width_bits}; }

  // "bytes", "bytes:2" (2-byte blocks), "tokens", "field:12".
  std::string ToString() const;
  static Result<Alphabet> Parse(std::string_view text);

  // Number of possible symbols, or 0 when unbounded (tokens).
  uint64_t Size() const;

  // How a key is written in a code table: bytes 0x41 (0x4142 for blocks), tokens as the
  // text itself, field values in decimal.
  std::string FormatKey(const SymbolKey& key) const;
  // Parses what FormatKey writes; rejects symbols outside the alphabet with a reason.
  Result<SymbolKey> ParseKey(std::string_view text) const;

  // Bits a literal of this symbol costs after an escape codeword, given literal_bits per
  // literal unit (bytes: one unit per byte; tokens: token length + 1; field: one unit).
  double LiteralBits(const SymbolKey& key, int literal_bits) const;

  bool operator==(const Alphabet&) const = default;
};

// Key of a field value (8 bytes big-endian) and back.
SymbolKey FieldKey(uint64_t value);
uint64_t FieldValue(const SymbolKey& key);

}  // namespace codedrift
