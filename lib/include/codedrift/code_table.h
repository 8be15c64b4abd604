// CodeTable: a deployed static code (prefix lengths, fixed width, or a frequency model), its
// YAML file format (DESIGN.md section 5) and the figures a table gives under a histogram.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "codedrift/alphabet.h"
#include "codedrift/result.h"
#include "codedrift/symbol_counts.h"

namespace codedrift {

enum class CodeKind { kPrefix, kFixed, kFrequencies };

struct EscapeCode {
  int length = 0;        // bits of the escape codeword (prefix), or its frequency's cost
  int literal_bits = 8;  // bits per literal unit that follows (see Alphabet::LiteralBits)
};

// An in-memory code table. Plain value type; not thread-safe to mutate while shared.
struct CodeTable {
  Alphabet alphabet;
  CodeKind kind = CodeKind::kPrefix;
  int max_length = 15;                       // prefix: longest codeword when retraining
  std::optional<EscapeCode> escape;
  std::map<SymbolKey, int> lengths;          // prefix
  int fixed_bits = 0;                        // fixed
  std::map<SymbolKey, uint64_t> frequencies; // frequencies (the escape, if any, is not here)
  uint64_t escape_frequency = 0;             // frequencies: the escape's count
  int precision_bits = 0;                    // frequencies: 0 = use the counts as given
  std::optional<SymbolCounts> training_counts;
  std::map<std::string, std::string> metadata;  // proposals: created, symbols, saving, ...

  // Cost in bits of one occurrence of `key`, the escape and literal included when the table
  // does not cover it; nullopt when uncovered and there is no escape.
  std::optional<double> CostBits(const SymbolKey& key) const;
  bool Covers(const SymbolKey& key) const;
  // Kraft sum of the codewords, escape included (prefix: exact; fixed: K / 2^b;
  // frequencies: 1 by construction).
  double KraftSumValue() const;
};

// Loads and validates a table file. Errors carry "file:line: reason".
Result<CodeTable> LoadCodeTable(const std::string& path);
Result<CodeTable> ParseCodeTable(const std::string& yaml_text, const std::string& file_name);
// Writes the canonical YAML text of a table (what LoadCodeTable reads back).
std::string FormatCodeTable(const CodeTable& table);
// Writes atomically: temp file, fsync, rename.
Status SaveCodeTable(const CodeTable& table, const std::string& path);

// One symbol's share of the redundancy: p_s (cost_s + log2 p_s).
struct DriftEntry {
  SymbolKey key;
  double probability = 0;
  double cost_bits = 0;       // codeword length under the table (escape + literal if uncovered)
  double share_bits = 0;      // p (cost + log2 p)
};

// What a table costs on a histogram.
struct TableFit {
  std::optional<double> deployed_mean_bits;  // nullopt when a symbol is uncovered, no escape
  uint64_t unknown_symbols = 0;              // occurrences of symbols the table does not cover
  double kraft_sum = 0;
  std::vector<DriftEntry> top_drift;         // largest share first, at most `top` entries
};
TableFit EvaluateTable(const CodeTable& table, const SymbolCounts& counts, size_t top = 10);

// Retrains a prefix code on counts: length-limited Huffman (max_length) plus one escape entry
// weighted by the symbols seen once (Good-Turing estimate of unseen mass, at least 1), so
// future unseen symbols stay codable. literal_bits: bits per literal unit after the escape.
Result<CodeTable> TrainPrefixTable(const SymbolCounts& counts, int max_length, int literal_bits);

// Out of sample: train on `older`, measure on `newer`. saving = 1 - L_new / L_dep.
struct SavingEstimate {
  double deployed_mean_bits = 0;   // L_dep on newer
  double retrained_mean_bits = 0;  // L_new(older -> newer)
  double saving_ratio = 0;
  double ideal_saving_ratio = 0;   // 1 - H(newer) / L_dep
};
std::optional<SavingEstimate> EstimateSaving(const CodeTable& deployed, const SymbolCounts& older,
                                             const SymbolCounts& newer, int literal_bits);

}  // namespace codedrift
