// The figures `codedrift inspect` reports, and their two renderings: the JSON object whose
// keys are a contract (DESIGN.md section 5) and an aligned table for people.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "codedrift/alphabet.h"

namespace codedrift::cli {

// One row of top_drift: a symbol's share of the redundancy p (cost + log2 p).
struct DriftRow {
  std::string symbol;   // as in table files (FormatKey)
  std::string display;  // as a person reads it (DisplayKey)
  double probability = 0;
  double length_bits = 0;  // codeword length, or escape + literal when uncovered
  double share_bits = 0;
};

// Figures of a deployed table on the stream (inspect --table).
struct TableReport {
  std::string path;
  std::optional<double> deployed_mean_bits;  // null: uncovered symbols and no escape
  std::optional<double> redundancy_bits;
  double kraft_sum = 0;
  uint64_t unknown_symbols = 0;
  std::optional<double> saving_ratio;        // older half -> newer half
  std::optional<double> saving_ideal_ratio;  // 1 - H(newer) / L_dep(newer)
  std::optional<double> retrained_mean_bits;
  std::vector<DriftRow> top_drift;
};

// Everything inspect prints. Plain value type.
struct InspectReport {
  Alphabet alphabet;
  uint64_t bytes = 0;
  uint64_t symbols = 0;
  uint64_t distinct = 0;
  double entropy_bits = 0;
  double entropy_mm_bits = 0;
  double entropy_stderr_bits = 0;
  int fixed_length_bits = 0;
  double huffman_mean_bits = 0;
  std::optional<double> huffman_limited_mean_bits;
  int max_length = 15;
  std::map<int, double> block_entropy_bits;  // order -> H(S^n)/n
  std::optional<double> conditional_entropy_bits;
  std::optional<double> deflate_bits;  // bits per symbol; bytes only
  uint64_t deflate_sampled_bytes = 0;
  std::optional<TableReport> table;
  std::vector<std::string> warnings;
};

nlohmann::ordered_json InspectJson(const InspectReport& report);
std::string InspectText(const InspectReport& report);

}  // namespace codedrift::cli
