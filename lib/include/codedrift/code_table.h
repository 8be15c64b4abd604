// CodeTable: a deployed static code (prefix lengths, fixed width, or a frequency model), its
// YAML file format (DESIGN.md section 5) and the figures a table gives under a histogram.
//
// File format notes beyond DESIGN.md section 5:
// - A frequencies table writes its escape as `escape: {frequency: N, literal_bits: B}`: the
//   escape is one more entry of the frequency model (cost -log2 q_escape), so it has a count
//   rather than a codeword length. A prefix table writes `escape: {length: L, literal_bits: B}`.
//   Both escape keys are required when `escape` is present.
// - A fixed table covers every symbol of a bounded alphabet (bytes, field) and takes no escape;
//   `bits` must give every symbol a codeword (alphabet size <= 2^bits), and tokens are refused.
// - Frequencies are integers >= 1 (leave a symbol out instead of giving it 0);
//   `precision_bits` (0..32, 0 = use the counts as given) is the total a range coder scales
//   the counts to (see QuantizeFrequencies).
// - `counts` (optional) holds training counts; `metadata` (optional) maps strings to strings.
// - Token symbols are YAML strings: double-quoted unless plainly safe, "\n" for the
//   end-of-record token and "" for the overflow token; bytes that are not printable ASCII are
//   escaped below 0x80 and written raw above it, so any token round-trips.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <unordered_map>
#include <vector>

#include "codedrift/alphabet.h"
#include "codedrift/result.h"
#include "codedrift/symbol_counts.h"

namespace codedrift {

enum class CodeKind { kPrefix, kFixed, kFrequencies };

// The word a table file's `kind:` key uses for `kind`: "prefix", "fixed" or "frequencies".
std::string_view CodeKindName(CodeKind kind);

// A token as a table file writes it in double quotes: quote and backslash escaped, control
// bytes as \n, \t, \r or \xNN, bytes >= 0x80 as they are. Tools show tokens this way too.
std::string QuoteToken(std::string_view token);

struct EscapeCode {
  int length = 0;        // prefix: bits of the escape codeword (frequencies: unused, 0; the
                         // escape's cost comes from CodeTable::escape_frequency)
  int literal_bits = 8;  // bits per literal unit that follows (see Alphabet::LiteralBits)
};

// An in-memory code table. Plain value type; not thread-safe to mutate while shared.
struct CodeTable {
  Alphabet alphabet;
  CodeKind kind = CodeKind::kPrefix;
  int max_length = 15;  // prefix: longest codeword when retraining
  std::optional<EscapeCode> escape;
  std::map<SymbolKey, int> lengths;           // prefix
  int fixed_bits = 0;                         // fixed
  std::map<SymbolKey, uint64_t> frequencies;  // frequencies (the escape, if any, is not here)
  uint64_t escape_frequency = 0;              // frequencies: the escape's count
  int precision_bits = 0;                     // frequencies: 0 = use the counts as given
  std::optional<SymbolCounts> training_counts;
  std::map<std::string, std::string> metadata;  // proposals: created, symbols, saving, ...

  // Cost in bits of one occurrence of `key`, the escape and literal included when the table
  // does not cover it; nullopt when uncovered and there is no escape. A frequencies table
  // rebuilds its model on every call (O(K log K)); cost many symbols through TableCosts.
  std::optional<double> CostBits(const SymbolKey& key) const;
  bool Covers(const SymbolKey& key) const;
  // True when every symbol the alphabet can produce is codable: an escape is present, or the
  // table covers every value of a bounded alphabet. A table without it must not be deployed.
  bool CoversWholeAlphabet() const;
  // Kraft sum of the codewords, escape included (prefix: exact; fixed: K / 2^b;
  // frequencies: 1 by construction).
  double KraftSumValue() const;
};

// Costs of every symbol a table covers, precomputed once (frequency quantization included) so
// that evaluating a histogram is O(K). Immutable after construction; safe to share for reading.
// It copies what it needs: the table need not outlive it.
class TableCosts {
 public:
  explicit TableCosts(const CodeTable& table);
  // Same contract as CodeTable::CostBits.
  std::optional<double> CostBits(const SymbolKey& key) const;
  bool Covers(const SymbolKey& key) const;

 private:
  Alphabet alphabet_;
  CodeKind kind_;
  double fixed_bits_ = 0;
  std::unordered_map<SymbolKey, double> costs_;  // prefix and frequencies
  std::optional<double> escape_bits_;            // the escape codeword alone
  int literal_bits_ = 0;
};

// Scales counts to a total of exactly 2^precision_bits (1..32) the way a range coder's static
// model would: every nonzero count keeps a frequency >= 1, zeros stay 0, and among such
// models it picks one that costs the fewest bits on the counts themselves (counts that already
// total 2^precision_bits come back unchanged). O(K log K). Error when the nonzero counts
// outnumber 2^precision_bits.
Result<std::vector<uint64_t>> QuantizeFrequencies(std::span<const uint64_t> counts,
                                                  int precision_bits);

// Loads and validates a table file. Errors carry "file:line: reason".
Result<CodeTable> LoadCodeTable(const std::string& path);
Result<CodeTable> ParseCodeTable(const std::string& yaml_text, const std::string& file_name);
// Writes the canonical YAML text of a table (what LoadCodeTable reads back).
std::string FormatCodeTable(const CodeTable& table);
// Writes atomically: temp file in the same directory, fsync, rename, fsync of the directory.
// Failures (no such directory, no space, ...) come back as an Error naming the path; the old
// file, if any, is left untouched.
Status SaveCodeTable(const CodeTable& table, const std::string& path);

// One symbol's share of the redundancy: p_s (cost_s + log2 p_s).
struct DriftEntry {
  SymbolKey key;
  double probability = 0;
  double cost_bits = 0;   // codeword length under the table (escape + literal if uncovered)
  double share_bits = 0;  // p (cost + log2 p)
};

// What a table costs on a histogram.
struct TableFit {
  std::optional<double> deployed_mean_bits;  // nullopt when a symbol is uncovered, no escape
  uint64_t unknown_symbols = 0;              // occurrences of symbols the table does not cover
  double kraft_sum = 0;
  std::vector<DriftEntry> top_drift;  // largest share first, at most `top` entries;
                                      // symbols with no cost (uncovered, no escape)
                                      // are left out
};
// deployed_mean_bits is also nullopt for an empty histogram.
TableFit EvaluateTable(const CodeTable& table, const SymbolCounts& counts, size_t top = 10);

// Retrains a prefix code on counts: length-limited Huffman (max_length) plus one escape entry
// weighted by the symbols seen once (Good-Turing estimate of unseen mass, at least 1), so
// future unseen symbols stay codable. literal_bits: bits per literal unit after the escape.
Result<CodeTable> TrainPrefixTable(const SymbolCounts& counts, int max_length, int literal_bits);

// Out of sample: train on `older` (TrainPrefixTable at the deployed table's max_length), measure
// on `newer`, where symbols new in `newer` pay the retrained escape. saving = 1 - L_new / L_dep.
// nullopt when L_dep is undefined or zero on `newer` (empty, or uncovered with no escape) or
// the retraining fails.
struct SavingEstimate {
  double deployed_mean_bits = 0;   // L_dep on newer
  double retrained_mean_bits = 0;  // L_new(older -> newer)
  double saving_ratio = 0;
  double ideal_saving_ratio = 0;  // 1 - H(newer) / L_dep
};
std::optional<SavingEstimate> EstimateSaving(const CodeTable& deployed, const SymbolCounts& older,
                                             const SymbolCounts& newer, int literal_bits);

}  // namespace codedrift
