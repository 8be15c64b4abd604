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
// "" is also the overflow symbol of the other alphabets whose symbolizers cap their distinct
// values (HasOverflowSymbol): a block key is always `block` bytes and a field key always 8, so
// the empty key never names a real block or value there either.
using SymbolKey = std::string;

inline constexpr std::string_view kEndOfRecordToken = "\n";
inline constexpr std::string_view kOverflowToken = "";

// Fields up to this width number their values directly (at most 2^16 ids); wider ones intern
// values and cap how many they keep (FieldOptions::max_distinct).
inline constexpr int kMaxDirectFieldWidth = 16;
// Byte blocks from this size on cap how many distinct blocks they keep
// (BytesOptions::max_distinct); smaller blocks have at most 2^16 values.
inline constexpr int kMinCappedBlock = 3;

enum class AlphabetKind { kBytes, kTokens, kField };

// Describes a symbol alphabet. Cheap to copy; immutable after construction.
struct Alphabet {
  AlphabetKind kind = AlphabetKind::kBytes;
  int block = 1;       // bytes: symbols are `block`-byte groups (1..4)
  int width_bits = 0;  // field: bits per value (1..32)

  static Alphabet Bytes(int block = 1) { return {AlphabetKind::kBytes, block, 0}; }
  static Alphabet Tokens() { return {AlphabetKind::kTokens, 1, 0}; }
  static Alphabet Field(int width_bits) { return {AlphabetKind::kField, 1, width_bits}; }

  // "bytes", "bytes:2" (2-byte blocks), "tokens", "field:12".
  std::string ToString() const;
  static Result<Alphabet> Parse(std::string_view text);

  // Number of possible symbols, or 0 when unbounded (tokens). The overflow symbol, where
  // there is one, is not counted.
  uint64_t Size() const;

  // True when the alphabet's symbolizer keeps at most max_distinct distinct symbols and maps
  // later new ones to the overflow symbol kOverflowToken: tokens, byte blocks of
  // kMinCappedBlock bytes or more, fields wider than kMaxDirectFieldWidth bits.
  bool HasOverflowSymbol() const;

  // How a key is written in a code table: bytes 0x41 (0x4142 for blocks), tokens as the
  // text itself, field values in decimal; the overflow symbol as "" in every alphabet.
  std::string FormatKey(const SymbolKey& key) const;
  // Parses what FormatKey writes; rejects symbols outside the alphabet with a reason ("" only
  // where HasOverflowSymbol).
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
