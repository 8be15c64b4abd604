#include "daemon_config_text.h"

#include <algorithm>
#include <vector>

namespace codedrift {

std::string QuoteForMessage(std::string_view text) {
  constexpr size_t kMaxShown = 48;
  constexpr char kHex[] = "0123456789abcdef";
  std::string out = "'";
  for (size_t i = 0; i < text.size() && i < kMaxShown; ++i) {
    const auto byte = static_cast<unsigned char>(text[i]);
    if (byte < 0x20 || byte >= 0x7f || byte == '\\' || byte == '\'') {
      out += "\\x";
      out += kHex[byte >> 4];
      out += kHex[byte & 15];
    } else {
      out += static_cast<char>(byte);
    }
  }
  if (text.size() > kMaxShown) out += "...";
  out += "'";
  return out;
}

size_t EditDistance(std::string_view a, std::string_view b) {
  // One row of the classic dynamic programme; O(|a| |b|) time, O(|b|) space.
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

std::string_view ClosestMatch(std::string_view word, std::span<const std::string_view> candidates) {
  constexpr size_t kLongestWorthComparing = 64;
  if (word.size() > kLongestWorthComparing) return {};
  const size_t limit = std::max<size_t>(2, word.size() / 3);
  std::string_view best;
  size_t best_distance = limit + 1;
  for (std::string_view candidate : candidates) {
    const size_t distance = EditDistance(word, candidate);
    if (distance < best_distance) {
      best_distance = distance;
      best = candidate;
    }
  }
  return best;
}

std::string JoinChoices(std::span<const std::string_view> choices) {
  std::string out;
  for (size_t i = 0; i < choices.size(); ++i) {
    if (i > 0) out += i + 1 == choices.size() ? " or " : ", ";
    out += choices[i];
  }
  return out;
}

}  // namespace codedrift
