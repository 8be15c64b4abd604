// ModelEvaluator: the per-interval figures of one model (DESIGN.md section 3) from a sample of
// its window and the deployed code table. O(K log K + N/batches) per call, never per symbol.
#pragma once

#include <chrono>
#include <cmath>
#include <cstdint>
#include <deque>
#include <optional>
#include <string>
#include <vector>

#include "codedrift/code_table.h"
#include "codedrift/entropy.h"
#include "codedrift/model.h"

namespace codedrift {

struct EvaluationOptions {
  int batches = 16;          // sub-windows; the newer half's batches give the confidence bound
  int max_length = 15;       // retrained code's longest codeword (the table's when it has one)
  double confidence = 0.95;  // one-sided, for saving_lower_ratio
  size_t top = 10;           // top drift entries kept
};

struct Evaluation {
  std::chrono::nanoseconds at{0};
  uint64_t window_symbols = 0;
  EntropyEstimate entropy;
  std::optional<double> deployed_mean_bits;   // L_dep over the window
  std::optional<double> redundancy_bits;      // L_dep - H
  std::optional<double> retrained_mean_bits;  // L_new(older -> newer), out of sample
  std::optional<double> saving_ratio;         // 1 - L_new / L_dep(newer)
  std::optional<double> saving_lower_ratio;   // batch-means lower confidence bound
  std::optional<double> ideal_saving_ratio;   // 1 - H(newer) / L_dep(newer)
  std::optional<double> payback_seconds;
  double kraft_sum = std::nan("");  // NaN: no table
  uint64_t unknown_in_window = 0;
  uint64_t symbols_total = 0;
  uint64_t records_total = 0;
  uint64_t unknown_symbols_total = 0;  // since start, under the table of the time
  double symbols_per_second = 0;
  double records_per_second = 0;
  double unknown_per_second = 0;
  double table_bits = 0;  // size of a retrained table as shipped
  std::vector<DriftEntry> top_drift;
  std::vector<std::string> warnings;
};

// Bits to ship a prefix table's lengths: dense alphabets send one 5-bit length per possible
// symbol (zero for absent), like DEFLATE's code-length lists; tokens and wide fields send each
// present symbol's literal plus its 5-bit length.
double ShippedTableBits(const Alphabet& alphabet, const SymbolCounts& symbols, int literal_bits);

// Bits per literal unit after an escape when a table does not say: 8 for bytes and tokens,
// the field width for fields.
int DefaultLiteralBits(const Alphabet& alphabet);

// What a ModelEvaluator carries from one evaluation to the next, for checkpoints. `last_at` is
// on the clock the samples were taken with.
struct EvaluatorState {
  bool evaluated = false;  // false: no evaluation yet (no rates on the next one)
  std::chrono::nanoseconds last_at{0};
  uint64_t last_records = 0;
  uint64_t last_symbols = 0;
  uint64_t unknown_total = 0;
  std::vector<uint64_t> last_cumulative;  // by symbol id, as of the last evaluation
};

// Keeps what spans evaluations (cumulative counts for rates and unknown totals).
// Not thread-safe: one evaluation thread per model.
class ModelEvaluator {
 public:
  explicit ModelEvaluator(EvaluationOptions options) : options_(options) {}

  Evaluation Evaluate(const ModelSample& sample, const CodeTable* table);
  // The whole window's counts as of the last Evaluate (proposals are trained on these).
  const std::optional<SymbolCounts>& last_window_counts() const { return last_window_; }
  const EvaluationOptions& options() const { return options_; }

  // Checkpoints. Import replaces what spans evaluations (the last window counts stay empty
  // until the next Evaluate).
  EvaluatorState ExportState() const;
  void ImportState(EvaluatorState state);

 private:
  EvaluationOptions options_;
  std::vector<uint64_t> last_cumulative_;
  std::chrono::nanoseconds last_at_{0};
  uint64_t last_records_ = 0;
  uint64_t last_symbols_ = 0;
  uint64_t unknown_total_ = 0;
  bool first_ = true;
  std::optional<SymbolCounts> last_window_;

  // (time, symbols_total, records_total) of recent evaluations for rates over kRateHorizon.
  struct RatePoint {
    std::chrono::nanoseconds at;
    uint64_t symbols;
    uint64_t records;
  };
  static constexpr std::chrono::seconds kRateHorizon{60};
  std::deque<RatePoint> rate_points_;
};

}  // namespace codedrift
