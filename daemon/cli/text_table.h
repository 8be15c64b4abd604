// Human output: rows of cells printed as aligned columns, and number formatting shared by the
// commands so the same figure reads the same everywhere.
#pragma once

#include <string>
#include <vector>

#include "codedrift/alphabet.h"

namespace codedrift::cli {

enum class Align { kLeft, kRight };

// Collects rows, then renders them with every column as wide as its widest cell, two spaces
// apart. Trailing spaces are trimmed. Plain value type.
class TextTable {
 public:
  explicit TextTable(std::vector<Align> columns) : columns_(std::move(columns)) {}
  void AddRow(std::vector<std::string> cells);
  std::string Render() const;

 private:
  std::vector<Align> columns_;
  std::vector<std::vector<std::string>> rows_;
};

// Fixed-point with `decimals` digits, trailing zeros (and a bare point) removed: 2.2, 2.121928,
// 3.
std::string FormatNumber(double value, int decimals = 6);

// A symbol as a person reads it: bytes as in table files (0x41), tokens in double quotes with
// C-style escapes as table files quote them (QuoteToken: "\n" is the end-of-record token, ""
// the overflow token).
std::string DisplayKey(const Alphabet& alphabet, const SymbolKey& key);

}  // namespace codedrift::cli
