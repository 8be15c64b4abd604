// What a code table costs on a histogram, retraining a prefix table, and the out-of-sample
// saving estimate of DESIGN.md section 3. All O(K) or O(K log K): per evaluation, never per
// symbol.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <vector>

#include "codedrift/canonical_code.h"
#include "codedrift/code_table.h"
#include "codedrift/entropy.h"
#include "codedrift/huffman.h"

namespace codedrift {
namespace {

// Mean cost per occurrence of `counts` under `costs`; nullopt when empty or a symbol has no
// cost (uncovered, no escape).
std::optional<double> MeanCostBits(const TableCosts& costs, const SymbolCounts& counts) {
  if (counts.total() == 0) return std::nullopt;
  double bits = 0;
  for (const auto& [key, count] : counts.map()) {
    const std::optional<double> cost = costs.CostBits(key);
    if (!cost) return std::nullopt;
    bits += static_cast<double>(count) * *cost;
  }
  return bits / static_cast<double>(counts.total());
}

}  // namespace

TableFit EvaluateTable(const CodeTable& table, const SymbolCounts& counts, size_t top) {
  const TableCosts costs(table);
  TableFit fit;
  fit.kraft_sum = table.KraftSumValue();
  const double total = static_cast<double>(counts.total());
  bool defined = counts.total() > 0;
  double bits = 0;
  std::vector<DriftEntry> entries;
  entries.reserve(counts.distinct());
  for (const auto& [key, count] : counts.map()) {
    if (!costs.Covers(key)) fit.unknown_symbols += count;
    const std::optional<double> cost = costs.CostBits(key);
    if (!cost) {
      defined = false;
      continue;
    }
    bits += static_cast<double>(count) * *cost;
    const double p = static_cast<double>(count) / total;
    entries.push_back({key, p, *cost, p * (*cost + std::log2(p))});
  }
  if (defined) fit.deployed_mean_bits = bits / total;
  // Largest share first; ties by key so that output is stable from run to run.
  auto larger = [](const DriftEntry& a, const DriftEntry& b) {
    return a.share_bits != b.share_bits ? a.share_bits > b.share_bits : a.key < b.key;
  };
  const size_t keep = std::min(top, entries.size());
  std::partial_sort(entries.begin(), entries.begin() + static_cast<std::ptrdiff_t>(keep),
                    entries.end(), larger);
  entries.resize(keep);
  fit.top_drift = std::move(entries);
  return fit;
}

Result<CodeTable> TrainPrefixTable(const SymbolCounts& counts, int max_length, int literal_bits) {
  if (max_length < 1 || max_length > kMaxCodeLength) {
    return Error{"max_length must be from 1 to " + std::to_string(kMaxCodeLength) + ", got " +
                 std::to_string(max_length)};
  }
  if (literal_bits < 1 || literal_bits > 64) {
    return Error{"literal_bits must be from 1 to 64, got " + std::to_string(literal_bits)};
  }
  const auto sorted = counts.Sorted();
  std::vector<uint64_t> weights;
  weights.reserve(sorted.size() + 1);
  uint64_t seen_once = 0;
  for (const auto& [key, count] : sorted) {
    weights.push_back(count);
    seen_once += count == 1 ? 1 : 0;
  }
  // Good-Turing: the chance that the next symbol is new is about (symbols seen once) / N, so
  // the escape gets the weight of the singletons (at least 1, so it always has a codeword).
  weights.push_back(std::max<uint64_t>(seen_once, 1));
  auto lengths = LimitedHuffmanLengths(weights, max_length);
  if (!lengths.ok()) return Error{"cannot retrain: " + lengths.error().message};

  CodeTable table;
  table.alphabet = counts.alphabet();
  table.kind = CodeKind::kPrefix;
  table.max_length = max_length;
  for (size_t i = 0; i < sorted.size(); ++i) {
    table.lengths.emplace(sorted[i].first, lengths.value()[i]);
  }
  table.escape = EscapeCode{lengths.value().back(), literal_bits};
  table.training_counts = counts;
  return table;
}

std::optional<SavingEstimate> EstimateSaving(const CodeTable& deployed, const SymbolCounts& older,
                                             const SymbolCounts& newer, int literal_bits) {
  const std::optional<double> deployed_bits = MeanCostBits(TableCosts(deployed), newer);
  if (!deployed_bits || *deployed_bits <= 0) return std::nullopt;
  auto retrained = TrainPrefixTable(older, deployed.max_length, literal_bits);
  if (!retrained.ok()) return std::nullopt;
  const std::optional<double> retrained_bits = MeanCostBits(TableCosts(retrained.value()), newer);
  if (!retrained_bits) return std::nullopt;  // cannot happen: the retrained table has an escape
  const std::vector<uint64_t> values = newer.Values();
  SavingEstimate estimate;
  estimate.deployed_mean_bits = *deployed_bits;
  estimate.retrained_mean_bits = *retrained_bits;
  estimate.saving_ratio = 1.0 - *retrained_bits / *deployed_bits;
  estimate.ideal_saving_ratio = 1.0 - PluginEntropyBits(values) / *deployed_bits;
  return estimate;
}

}  // namespace codedrift
