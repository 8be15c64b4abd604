#include "code_table_text.h"

#include <algorithm>
#include <charconv>

namespace codedrift::table_text {
namespace {

constexpr char kHex[] = "0123456789abcdef";

bool PlainSafeChar(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' ||
         c == '.' || c == '-' || c == '/' || c == '+';
}

}  // namespace

std::string DoubleQuoted(std::string_view text) {
  std::string out = "\"";
  for (char c : text) {
    const auto byte = static_cast<unsigned char>(c);
    switch (c) {
      case '"':
        out += "\\\"";
        break;
      case '\\':
        out += "\\\\";
        break;
      case '\n':
        out += "\\n";
        break;
      case '\t':
        out += "\\t";
        break;
      case '\r':
        out += "\\r";
        break;
      default:
        if (byte < 0x20 || byte == 0x7f) {
          out += "\\x";
          out += kHex[byte >> 4];
          out += kHex[byte & 15];
        } else {
          out += c;
        }
    }
  }
  out += '"';
  return out;
}

std::string Scalar(std::string_view text) {
  // Conservative: a plain scalar must start with a letter, digit or underscore (no YAML
  // indicator), use only characters that never start a token, and not read as null.
  const bool plain = !text.empty() && std::all_of(text.begin(), text.end(), PlainSafeChar) &&
                     text[0] != '-' && text[0] != '.' && text[0] != '+' && text != "null" &&
                     text != "Null" && text != "NULL";
  return plain ? std::string(text) : DoubleQuoted(text);
}

std::string ShortestDouble(double value) {
  char buffer[64];
  auto [end, ec] = std::to_chars(buffer, buffer + sizeof buffer, value);
  if (ec != std::errc()) return "?";
  return std::string(buffer, end);
}

}  // namespace codedrift::table_text
