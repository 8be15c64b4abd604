// Per-symbol costs of a code table: codeword lengths, fixed widths, or -log2 q of a (quantized)
// frequency model, plus the escape and its literal for symbols the table does not cover.
#include <cmath>
#include <cstdint>
#include <queue>
#include <vector>

#include "codedrift/canonical_code.h"
#include "codedrift/code_table.h"

namespace codedrift {
namespace {

// Bits saved by raising a quantized frequency from q to q + 1 for a symbol seen `count` times.
double Saving(uint64_t count, uint64_t q) {
  return static_cast<double>(count) *
         std::log2(static_cast<double>(q + 1) / static_cast<double>(q));
}

}  // namespace

Result<std::vector<uint64_t>> QuantizeFrequencies(std::span<const uint64_t> counts,
                                                  int precision_bits) {
  if (precision_bits < 1 || precision_bits > 32) {
    return Error{"precision_bits must be from 1 to 32, got " + std::to_string(precision_bits)};
  }
  const uint64_t target = uint64_t{1} << precision_bits;
  __extension__ typedef unsigned __int128 Wide;
  Wide total = 0;
  uint64_t nonzero = 0;
  for (uint64_t c : counts) {
    total += c;
    nonzero += c > 0 ? 1 : 0;
  }
  if (nonzero > target) {
    return Error{std::to_string(nonzero) + " symbols do not fit a total of 2^" +
                 std::to_string(precision_bits) + " with each at least 1"};
  }
  std::vector<uint64_t> q(counts.size(), 0);
  if (nonzero == 0) return q;
  // Minimising sum c_i log2(T / q_i) over integers q_i >= 1 with sum T is a separable convex
  // resource allocation, so handing out units one at a time to the largest marginal saving is
  // optimal from any start that lies below an optimum (marginal analysis). The continuous
  // optimum is q_i = max(1, c_i / mu) >= c_i (T - K) / total, and an integer optimum lies
  // within one unit below it (Hochbaum 1994, proximity for resource allocation, from memory),
  // so the start max(1, floor(c_i (T - K) / total)) qualifies and leaves at most 2K units.
  const uint64_t spare = target - nonzero;
  uint64_t sum = 0;
  for (size_t i = 0; i < counts.size(); ++i) {
    if (counts[i] == 0) continue;
    const auto scaled = static_cast<uint64_t>(Wide{counts[i]} * spare / total);
    q[i] = scaled == 0 ? 1 : scaled;
    sum += q[i];
  }
  using Candidate = std::pair<double, size_t>;  // (bits saved by one more unit, index)
  std::priority_queue<Candidate> heap;
  for (size_t i = 0; i < q.size(); ++i) {
    if (q[i] > 0) heap.emplace(Saving(counts[i], q[i]), i);
  }
  for (; sum < target; ++sum) {
    const size_t i = heap.top().second;
    heap.pop();
    ++q[i];
    heap.emplace(Saving(counts[i], q[i]), i);
  }
  return q;
}

TableCosts::TableCosts(const CodeTable& table)
    : alphabet_(table.alphabet),
      kind_(table.kind),
      fixed_bits_(table.fixed_bits),
      literal_bits_(table.escape ? table.escape->literal_bits : 0) {
  switch (table.kind) {
    case CodeKind::kPrefix:
      for (const auto& [key, length] : table.lengths) {
        if (length > 0) costs_.emplace(key, length);
      }
      if (table.escape) escape_bits_ = table.escape->length;
      break;
    case CodeKind::kFixed:
      break;
    case CodeKind::kFrequencies: {
      std::vector<uint64_t> weights;
      weights.reserve(table.frequencies.size() + 1);
      for (const auto& entry : table.frequencies) weights.push_back(entry.second);
      const bool has_escape = table.escape && table.escape_frequency > 0;
      if (has_escape) weights.push_back(table.escape_frequency);
      if (table.precision_bits > 0) {
        // A table too fine for its precision is refused on load; one built in code keeps its
        // counts as given rather than failing here.
        auto quantized = QuantizeFrequencies(weights, table.precision_bits);
        if (quantized.ok()) weights = std::move(quantized).value();
      }
      double total = 0;
      for (uint64_t w : weights) total += static_cast<double>(w);
      const double log_total = std::log2(total);
      size_t i = 0;
      for (const auto& entry : table.frequencies) {
        if (weights[i] > 0) {
          costs_.emplace(entry.first, log_total - std::log2(static_cast<double>(weights[i])));
        }
        ++i;
      }
      if (has_escape) escape_bits_ = log_total - std::log2(static_cast<double>(weights[i]));
      break;
    }
  }
}

bool TableCosts::Covers(const SymbolKey& key) const {
  return kind_ == CodeKind::kFixed || costs_.contains(key);
}

std::optional<double> TableCosts::CostBits(const SymbolKey& key) const {
  if (kind_ == CodeKind::kFixed) return fixed_bits_;
  auto it = costs_.find(key);
  if (it != costs_.end()) return it->second;
  if (!escape_bits_) return std::nullopt;
  return *escape_bits_ + alphabet_.LiteralBits(key, literal_bits_);
}

std::optional<double> CodeTable::CostBits(const SymbolKey& key) const {
  if (kind == CodeKind::kPrefix) {
    // The common single lookup needs no precomputation.
    auto it = lengths.find(key);
    if (it != lengths.end() && it->second > 0) return it->second;
    if (!escape) return std::nullopt;
    return escape->length + alphabet.LiteralBits(key, escape->literal_bits);
  }
  return TableCosts(*this).CostBits(key);
}

bool CodeTable::Covers(const SymbolKey& key) const {
  switch (kind) {
    case CodeKind::kPrefix: {
      auto it = lengths.find(key);
      return it != lengths.end() && it->second > 0;
    }
    case CodeKind::kFixed:
      return true;
    case CodeKind::kFrequencies: {
      auto it = frequencies.find(key);
      return it != frequencies.end() && it->second > 0;
    }
  }
  return false;
}

bool CodeTable::CoversWholeAlphabet() const {
  const uint64_t size = alphabet.Size();
  switch (kind) {
    case CodeKind::kPrefix: {
      if (escape) return true;
      uint64_t covered = 0;
      for (const auto& entry : lengths) covered += entry.second > 0 ? 1 : 0;
      return size > 0 && covered >= size;
    }
    case CodeKind::kFixed:
      return size > 0 && fixed_bits >= 0 && fixed_bits < 64 && size <= (uint64_t{1} << fixed_bits);
    case CodeKind::kFrequencies: {
      if (escape && escape_frequency > 0) return true;
      uint64_t covered = 0;
      for (const auto& entry : frequencies) covered += entry.second > 0 ? 1 : 0;
      return size > 0 && covered >= size;
    }
  }
  return false;
}

double CodeTable::KraftSumValue() const {
  switch (kind) {
    case CodeKind::kPrefix: {
      std::vector<int> all;
      all.reserve(lengths.size() + 1);
      for (const auto& entry : lengths) all.push_back(entry.second);
      if (escape) all.push_back(escape->length);
      return ComputeKraftSum(all).value();
    }
    case CodeKind::kFixed:
      return std::ldexp(static_cast<double>(alphabet.Size()), -fixed_bits);
    case CodeKind::kFrequencies: {
      // The model's probabilities sum to one whenever it has any entry at all.
      const bool any = (escape && escape_frequency > 0) || !frequencies.empty();
      return any ? 1.0 : 0.0;
    }
  }
  return 0;
}

}  // namespace codedrift
