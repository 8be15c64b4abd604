#include "text_table.h"

#include <algorithm>
#include <cstdio>

#include "codedrift/code_table.h"

namespace codedrift::cli {

void TextTable::AddRow(std::vector<std::string> cells) { rows_.push_back(std::move(cells)); }

std::string TextTable::Render() const {
  std::vector<size_t> widths(columns_.size(), 0);
  for (const auto& row : rows_) {
    for (size_t c = 0; c < row.size() && c < widths.size(); ++c) {
      widths[c] = std::max(widths[c], row[c].size());
    }
  }
  std::string out;
  for (const auto& row : rows_) {
    std::string line;
    for (size_t c = 0; c < widths.size(); ++c) {
      const std::string cell = c < row.size() ? row[c] : "";
      const std::string pad(widths[c] - std::min(widths[c], cell.size()), ' ');
      if (c > 0) line += "  ";
      line += columns_[c] == Align::kRight ? pad + cell : cell + pad;
    }
    line.erase(line.find_last_not_of(' ') + 1);
    out += line;
    out += '\n';
  }
  return out;
}

std::string FormatNumber(double value, int decimals) {
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%.*f", decimals, value);
  std::string text = buffer;
  if (text.find('.') != std::string::npos) {
    text.erase(text.find_last_not_of('0') + 1);
    if (text.back() == '.') text.pop_back();
  }
  if (text == "-0") text = "0";
  return text;
}

std::string DisplayKey(const Alphabet& alphabet, const SymbolKey& key) {
  // The overflow symbol ("") is shown quoted in every alphabet, so it is never a blank cell.
  if (alphabet.kind != AlphabetKind::kTokens && !key.empty()) return alphabet.FormatKey(key);
  return QuoteToken(key);
}

}  // namespace codedrift::cli
