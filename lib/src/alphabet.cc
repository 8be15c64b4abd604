#include "codedrift/alphabet.h"

#include <charconv>
#include <cmath>

namespace codedrift {
namespace {

constexpr char kHex[] = "0123456789abcdef";

int HexDigit(char c) {
  if (c >= '0' && c <= '9') return c - '0';
  if (c >= 'a' && c <= 'f') return c - 'a' + 10;
  if (c >= 'A' && c <= 'F') return c - 'A' + 10;
  return -1;
}

Result<int> ParseSmallInt(std::string_view text, int lo, int hi, std::string_view what) {
  int value = 0;
  auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (ec != std::errc() || end != text.data() + text.size() || value < lo || value > hi) {
    return Error{std::string(what) + " must be an integer from " + std::to_string(lo) + " to " +
                 std::to_string(hi) + ", got '" + std::string(text) + "'"};
  }
  return value;
}

}  // namespace

std::string Alphabet::ToString() const {
  switch (kind) {
    case AlphabetKind::kBytes:
      return block == 1 ? "bytes" : "bytes:" + std::to_string(block);
    case AlphabetKind::kTokens:
      return "tokens";
    case AlphabetKind::kField:
      return "field:" + std::to_string(width_bits);
  }
  return "?";
}

Result<Alphabet> Alphabet::Parse(std::string_view text) {
  if (text == "bytes") return Bytes();
  if (text == "tokens") return Tokens();
  if (text.starts_with("bytes:")) {
    auto block = ParseSmallInt(text.substr(6), 1, 4, "byte block size");
    if (!block.ok()) return block.error();
    return Bytes(block.value());
  }
  if (text.starts_with("field:")) {
    auto width = ParseSmallInt(text.substr(6), 1, 32, "field width");
    if (!width.ok()) return width.error();
    return Field(width.value());
  }
  return Error{"unknown alphabet '" + std::string(text) +
               "' (expected bytes, bytes:<n>, tokens or field:<width bits>)"};
}

uint64_t Alphabet::Size() const {
  switch (kind) {
    case AlphabetKind::kBytes:
      return uint64_t{1} << (8 * block);
    case AlphabetKind::kTokens:
      return 0;
    case AlphabetKind::kField:
      return uint64_t{1} << width_bits;
  }
  return 0;
}

bool Alphabet::HasOverflowSymbol() const {
  switch (kind) {
    case AlphabetKind::kBytes:
      return block >= kMinCappedBlock;
    case AlphabetKind::kTokens:
      return true;
    case AlphabetKind::kField:
      return width_bits > kMaxDirectFieldWidth;
  }
  return false;
}

std::string Alphabet::FormatKey(const SymbolKey& key) const {
  // No block or field key is empty: "" is the overflow symbol, in every alphabet alike.
  if (key.empty()) return std::string(kOverflowToken);
  switch (kind) {
    case AlphabetKind::kBytes: {
      std::string out = "0x";
      for (unsigned char c : key) {
        out += kHex[c >> 4];
        out += kHex[c & 15];
      }
      return out;
    }
    case AlphabetKind::kTokens:
      return key;
    case AlphabetKind::kField:
      return std::to_string(FieldValue(key));
  }
  return key;
}

Result<SymbolKey> Alphabet::ParseKey(std::string_view text) const {
  if (text.empty() && kind != AlphabetKind::kTokens) {
    if (HasOverflowSymbol()) return SymbolKey(kOverflowToken);
    return Error{"symbol \"\" (the overflow symbol) is not a " + ToString() +
                 " symbol: only byte blocks of " + std::to_string(kMinCappedBlock) +
                 " or more bytes and fields wider than " + std::to_string(kMaxDirectFieldWidth) +
                 " bits have one"};
  }
  switch (kind) {
    case AlphabetKind::kBytes: {
      const size_t digits = 2 * static_cast<size_t>(block);
      if (text.size() != digits + 2 || !(text.starts_with("0x") || text.starts_with("0X"))) {
        return Error{"symbol '" + std::string(text) + "' is not a " + ToString() +
                     " symbol (expected 0x followed by " + std::to_string(digits) + " hex digits)"};
      }
      SymbolKey key;
      for (size_t i = 2; i < text.size(); i += 2) {
        const int hi = HexDigit(text[i]);
        const int lo = HexDigit(text[i + 1]);
        if (hi < 0 || lo < 0) {
          return Error{"symbol '" + std::string(text) + "' has a character that is not hex"};
        }
        key += static_cast<char>(hi * 16 + lo);
      }
      return key;
    }
    case AlphabetKind::kTokens:
      return SymbolKey(text);
    case AlphabetKind::kField: {
      uint64_t value = 0;
      auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), value);
      if (ec != std::errc() || end != text.data() + text.size() || value >= Size()) {
        return Error{"symbol '" + std::string(text) + "' is not a value of a " +
                     std::to_string(width_bits) + "-bit field (expected 0.." +
                     std::to_string(Size() - 1) + ")"};
      }
      return FieldKey(value);
    }
  }
  return Error{"unknown alphabet"};
}

double Alphabet::LiteralBits(const SymbolKey& key, int literal_bits) const {
  switch (kind) {
    case AlphabetKind::kBytes:
      return static_cast<double>(literal_bits) * static_cast<double>(block);
    case AlphabetKind::kTokens:
      return static_cast<double>(literal_bits) * static_cast<double>(key.size() + 1);
    case AlphabetKind::kField:
      return static_cast<double>(literal_bits);
  }
  return 0;
}

SymbolKey FieldKey(uint64_t value) {
  SymbolKey key(8, '\0');
  for (int i = 7; i >= 0; --i) {
    key[static_cast<size_t>(i)] = static_cast<char>(value & 0xff);
    value >>= 8;
  }
  return key;
}

uint64_t FieldValue(const SymbolKey& key) {
  uint64_t value = 0;
  for (unsigned char c : key) value = (value << 8) | c;
  return value;
}

}  // namespace codedrift
