#include "code_table_text.h"

#include <algorithm>
#include <charconv>
#include <vector>

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

size_t EditDistance(std::string_view a, std::string_view b) {
  std::vector<size_t> row(b.size() + 1);
  for (size_t j = 0; j <= b.size(); ++j) row[j] = j;
  for (size_t i = 1; i <= a.size(); ++i) {
    size_t diagonal = row[0];
    row[0] = i;
    for (size_t j = 1; j <= b.size(); ++j) {
      const size_t above = row[j];
      row[j] = std::min({row[j] + 1, row[j - 1] + 1, diagonal + (a[i - 1] == b[j - 1] ? 0 : 1)});
      diagonal = above;
    }
  }
  return row[b.size()];
}

std::string_view ClosestWord(std::string_view word, std::span<const std::string_view> known) {
  std::string_view best;
  size_t best_distance = 0;
  for (std::string_view candidate : known) {
    const size_t distance = EditDistance(word, candidate);
    if (best.empty() || distance < best_distance) {
      best = candidate;
      best_distance = distance;
    }
  }
  // A typo changes a few characters; beyond a third of the word it is a different word.
  const size_t limit = std::max<size_t>(2, word.size() / 3);
  return best_distance <= limit ? best : std::string_view();
}

}  // namespace codedrift::table_text
