#include "codedrift/evaluator.h"

#include <algorithm>
#include <cmath>

#include <boost/math/distributions/students_t.hpp>

namespace codedrift {
namespace {

constexpr int kLengthFieldBits = 5;  // a length 0..31, as DEFLATE ships code lengths

SymbolCounts ToSymbolCounts(const Alphabet& alphabet, const std::vector<SymbolKey>& keys,
                            const std::vector<uint64_t>& dense) {
  SymbolCounts counts(alphabet);
  for (size_t id = 0; id < dense.size() && id < keys.size(); ++id) counts.Add(keys[id], dense[id]);
  return counts;
}

void AddInto(std::vector<uint64_t>& sum, const std::vector<uint64_t>& part) {
  if (sum.size() < part.size()) sum.resize(part.size(), 0);
  for (size_t i = 0; i < part.size(); ++i) sum[i] += part[i];
}

uint64_t Total(const std::vector<uint64_t>& counts) {
  uint64_t total = 0;
  for (uint64_t c : counts) total += c;
  return total;
}

// Bits the counts cost under a per-id cost vector; nullopt when a present symbol has no cost.
std::optional<double> CodedBits(const std::vector<uint64_t>& counts,
                                const std::vector<std::optional<double>>& cost) {
  double bits = 0;
  for (size_t id = 0; id < counts.size(); ++id) {
    if (counts[id] == 0) continue;
    if (id >= cost.size() || !cost[id]) return std::nullopt;
    bits += static_cast<double>(counts[id]) * *cost[id];
  }
  return bits;
}

std::vector<std::optional<double>> CostVector(const TableCosts& table,
                                              const std::vector<SymbolKey>& keys) {
  std::vector<std::optional<double>> cost(keys.size());
  for (size_t id = 0; id < keys.size(); ++id) cost[id] = table.CostBits(keys[id]);
  return cost;
}

// One-sided lower bound of the mean of `values` at `confidence` (Student t, batch means).
std::optional<double> LowerBound(double point, const std::vector<double>& values,
                                 double confidence) {
  const size_t m = values.size();
  if (m < 2) return std::nullopt;
  double mean = 0;
  for (double v : values) mean += v;
  mean /= static_cast<double>(m);
  double squares = 0;
  for (double v : values) squares += (v - mean) * (v - mean);
  const double sd = std::sqrt(squares / static_cast<double>(m - 1));
  const boost::math::students_t t_dist(static_cast<double>(m - 1));
  const double t = boost::math::quantile(t_dist, confidence);
  return point - t * sd / std::sqrt(static_cast<double>(m));
}

}  // namespace

int DefaultLiteralBits(const Alphabet& alphabet) {
  return alphabet.kind == AlphabetKind::kField ? alphabet.width_bits : 8;
}

double ShippedTableBits(const Alphabet& alphabet, const SymbolCounts& symbols, int literal_bits) {
  const uint64_t size = alphabet.Size();
  const double escape = kLengthFieldBits;
  if (size != 0 && size <= 65536) return static_cast<double>(size) * kLengthFieldBits + escape;
  double bits = escape;
  for (const auto& [key, count] : symbols.map()) {
    bits += alphabet.LiteralBits(key, literal_bits) + kLengthFieldBits;
  }
  return bits;
}

Evaluation ModelEvaluator::Evaluate(const ModelSample& sample, const CodeTable* table) {
  Evaluation e;
  e.at = sample.taken_at;
  e.symbols_total = sample.symbols_total;
  e.records_total = sample.records_total;
  const Alphabet& alphabet = sample.alphabet;
  const auto id_limit = static_cast<SymbolId>(sample.keys.size());
  const WindowCounts window = sample.window->Count(options_.batches, id_limit);
  e.window_symbols = window.symbols;

  const size_t half = window.batches.size() / 2;
  std::vector<uint64_t> whole(id_limit, 0), older(id_limit, 0), newer(id_limit, 0);
  for (size_t b = 0; b < window.batches.size(); ++b) {
    AddInto(whole, window.batches[b]);
    AddInto(b < half ? older : newer, window.batches[b]);
  }
  e.entropy = EstimateEntropy(whole);
  if (TooFewSymbols(e.entropy.symbols, e.entropy.distinct)) {
    e.warnings.push_back("window holds " + std::to_string(e.entropy.symbols) + " symbols for " +
                         std::to_string(e.entropy.distinct) +
                         " distinct: fewer than 10 per symbol, figures are rough");
  }
  SymbolCounts window_counts = ToSymbolCounts(alphabet, sample.keys, whole);

  // Seconds since the previous evaluation (for the unknown-symbol rate).
  const double seconds = first_ ? 0 : std::chrono::duration<double>(e.at - last_at_).count();
  // Rates over a horizon of several evaluations: one quiet interval on a bursty link must not
  // read as "no traffic" (payback, and so the alert, would flicker).
  rate_points_.push_back({e.at, sample.symbols_total, sample.records_total});
  while (rate_points_.size() > 2 && e.at - rate_points_[1].at >= kRateHorizon) {
    rate_points_.pop_front();
  }
  const RatePoint& oldest = rate_points_.front();
  const double horizon = std::chrono::duration<double>(e.at - oldest.at).count();
  if (horizon > 0) {
    e.symbols_per_second = static_cast<double>(sample.symbols_total - oldest.symbols) / horizon;
    e.records_per_second = static_cast<double>(sample.records_total - oldest.records) / horizon;
  }

  if (table != nullptr) {
    const TableFit fit = EvaluateTable(*table, window_counts, options_.top);
    e.kraft_sum = fit.kraft_sum;
    e.unknown_in_window = fit.unknown_symbols;
    e.top_drift = fit.top_drift;
    e.deployed_mean_bits = fit.deployed_mean_bits;
    if (e.deployed_mean_bits) e.redundancy_bits = *e.deployed_mean_bits - e.entropy.plugin_bits;

    const TableCosts deployed_costs(*table);
    // Unknown symbols that arrived since the last evaluation.
    uint64_t unknown_new = 0;
    for (size_t id = 0; id < sample.cumulative.size() && id < sample.keys.size(); ++id) {
      const uint64_t before = id < last_cumulative_.size() ? last_cumulative_[id] : 0;
      if (sample.cumulative[id] > before && !deployed_costs.Covers(sample.keys[id])) {
        unknown_new += sample.cumulative[id] - before;
      }
    }
    unknown_total_ += unknown_new;
    if (seconds > 0) e.unknown_per_second = static_cast<double>(unknown_new) / seconds;

    const uint64_t older_n = Total(older);
    const uint64_t newer_n = Total(newer);
    const int literal_bits =
        table->escape ? table->escape->literal_bits : DefaultLiteralBits(alphabet);
    const int max_length =
        table->kind == CodeKind::kPrefix ? table->max_length : options_.max_length;
    if (older_n > 0 && newer_n > 0) {
      auto retrained =
          TrainPrefixTable(ToSymbolCounts(alphabet, sample.keys, older), max_length, literal_bits);
      const auto deployed_cost = CostVector(deployed_costs, sample.keys);
      const auto deployed_newer = CodedBits(newer, deployed_cost);
      if (retrained.ok() && deployed_newer && *deployed_newer > 0) {
        const auto new_cost = CostVector(TableCosts(retrained.value()), sample.keys);
        const double retrained_newer = CodedBits(newer, new_cost).value_or(0);
        const double l_dep = *deployed_newer / static_cast<double>(newer_n);
        e.retrained_mean_bits = retrained_newer / static_cast<double>(newer_n);
        e.saving_ratio = 1.0 - retrained_newer / *deployed_newer;
        e.ideal_saving_ratio = 1.0 - PluginEntropyBits(newer) / l_dep;
        std::vector<double> batch_savings;
        for (size_t b = half; b < window.batches.size(); ++b) {
          const auto dep = CodedBits(window.batches[b], deployed_cost);
          const auto now = CodedBits(window.batches[b], new_cost);
          if (dep && now && *dep > 0) batch_savings.push_back(1.0 - *now / *dep);
        }
        e.saving_lower_ratio = LowerBound(*e.saving_ratio, batch_savings, options_.confidence);
        e.table_bits = ShippedTableBits(alphabet, window_counts, literal_bits);
        if (*e.saving_ratio > 0 && e.symbols_per_second > 0) {
          e.payback_seconds = e.table_bits / (*e.saving_ratio * l_dep * e.symbols_per_second);
        }
      }
    }
  }
  e.unknown_symbols_total = unknown_total_;

  last_cumulative_ = sample.cumulative;
  last_at_ = e.at;
  last_records_ = sample.records_total;
  last_symbols_ = sample.symbols_total;
  first_ = false;
  last_window_ = std::move(window_counts);
  return e;
}

EvaluatorState ModelEvaluator::ExportState() const {
  return EvaluatorState{.evaluated = !first_,
                        .last_at = last_at_,
                        .last_records = last_records_,
                        .last_symbols = last_symbols_,
                        .unknown_total = unknown_total_,
                        .last_cumulative = last_cumulative_};
}

void ModelEvaluator::ImportState(EvaluatorState state) {
  first_ = !state.evaluated;
  last_at_ = state.last_at;
  last_records_ = state.last_records;
  last_symbols_ = state.last_symbols;
  unknown_total_ = state.unknown_total;
  last_cumulative_ = std::move(state.last_cumulative);
  last_window_.reset();
  // Checkpoints keep only the last evaluation: rates restart from it.
  rate_points_.clear();
  if (state.evaluated) rate_points_.push_back({last_at_, last_symbols_, last_records_});
}

}  // namespace codedrift
