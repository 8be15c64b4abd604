// The figures `codedrift compare` reports on two symbol distributions A and B (two captures,
// or a capture and a code table's training counts), and their two renderings: a JSON object
// and aligned text for people.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "codedrift/alphabet.h"
#include "codedrift/code_table.h"
#include "codedrift/symbol_counts.h"

namespace codedrift::cli {

// One side's own figures. Plain value type.
struct CompareSide {
  std::string file;
  std::string source;  // "capture" or "table_counts"
  uint64_t symbols = 0;
  uint64_t distinct = 0;
  double entropy_bits = 0;
  double entropy_mm_bits = 0;
  double entropy_stderr_bits = 0;
  // Under the comparison's code table (when there is one):
  std::optional<double> deployed_mean_bits;  // null: uncovered symbols and no escape
  std::optional<double> redundancy_bits;
  uint64_t unknown_symbols = 0;
};

// A symbol whose probability differs between the sides.
struct MovedSymbol {
  std::string symbol;   // as in table files (FormatKey)
  std::string display;  // as a person reads it (DisplayKey)
  double probability_a = 0;
  double probability_b = 0;
};

// Everything compare prints. Plain value type.
struct CompareReport {
  Alphabet alphabet;
  CompareSide a;
  CompareSide b;
  std::optional<std::string> table;  // path of the table the mean lengths are under
  uint64_t shared_symbols = 0;       // distinct symbols seen on both sides
  uint64_t only_a_symbols = 0;
  uint64_t only_b_symbols = 0;
  double total_variation = 0;                       // (1/2) sum |p_a - p_b|
  double js_divergence_bits = 0;                    // Jensen-Shannon, log base 2, in [0, 1]
  std::optional<double> relative_entropy_a_b_bits;  // D(A || B); null when infinite
  std::optional<double> relative_entropy_b_a_bits;  // D(B || A); null when infinite
  std::vector<MovedSymbol> top_moved;               // largest |p_b - p_a| first
  std::vector<std::string> warnings;
};

// Fills everything but the sides' `file` and `source`. `table` may be null (no mean lengths).
// `top` bounds top_moved; symbols whose probability did not change are left out. Both count
// sets must be non-empty and of one alphabet. O(K log K).
CompareReport CompareCounts(const SymbolCounts& a, const SymbolCounts& b, const CodeTable* table,
                            size_t top);

nlohmann::ordered_json CompareJson(const CompareReport& report);
std::string CompareText(const CompareReport& report);

}  // namespace codedrift::cli
