// SymbolCounts: a histogram keyed by symbol, the exchange format between symbolizers, windows,
// estimators and code tables. Mergeable: windows and fleets add and subtract count sets.
#pragma once

#include <cstdint>
#include <unordered_map>
#include <utility>
#include <vector>

#include "codedrift/alphabet.h"

namespace codedrift {

// Counts per symbol of one alphabet. Not thread-safe; copyable.
class SymbolCounts {
 public:
  explicit SymbolCounts(Alphabet alphabet) : alphabet_(alphabet) {}

  const Alphabet& alphabet() const { return alphabet_; }
  uint64_t total() const { return total_; }
  // Symbols with a nonzero count.
  size_t distinct() const { return counts_.size(); }
  uint64_t Count(const SymbolKey& key) const;

  void Add(const SymbolKey& key, uint64_t n = 1);
  // Removes n occurrences; the caller guarantees they were added before.
  void Subtract(const SymbolKey& key, uint64_t n = 1);
  void Merge(const SymbolCounts& other);
  // Removes every count of `other`; the caller guarantees other ⊆ this.
  void Remove(const SymbolCounts& other);
  void Clear();

  // Nonzero counts in no particular order (estimators need nothing else).
  std::vector<uint64_t> Values() const;
  // (key, count) pairs sorted by key, for stable output and training.
  std::vector<std::pair<SymbolKey, uint64_t>> Sorted() const;
  const std::unordered_map<SymbolKey, uint64_t>& map() const { return counts_; }

 private:
  Alphabet alphabet_;
  uint64_t total_ = 0;
  std::unordered_map<SymbolKey, uint64_t> counts_;
};

// Counts of single bytes from a dense 256-entry histogram (the bytes hot path's output).
SymbolCounts BytesFromHistogram(const uint64_t (&histogram)[256]);

}  // namespace codedrift
