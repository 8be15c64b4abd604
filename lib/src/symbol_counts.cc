#include "codedrift/symbol_counts.h"

#include <algorithm>

namespace codedrift {

uint64_t SymbolCounts::Count(const SymbolKey& key) const {
  auto it = counts_.find(key);
  return it == counts_.end() ? 0 : it->second;
}

void SymbolCounts::Add(const SymbolKey& key, uint64_t n) {
  if (n == 0) return;
  counts_[key] += n;
  total_ += n;
}

void SymbolCounts::Subtract(const SymbolKey& key, uint64_t n) {
  auto it = counts_.find(key);
  if (it == counts_.end() || n == 0) return;
  const uint64_t removed = std::min(n, it->second);
  it->second -= removed;
  total_ -= removed;
  if (it->second == 0) counts_.erase(it);
}

void SymbolCounts::Merge(const SymbolCounts& other) {
  for (const auto& [key, n] : other.counts_) Add(key, n);
}

void SymbolCounts::Remove(const SymbolCounts& other) {
  for (const auto& [key, n] : other.counts_) Subtract(key, n);
}

void SymbolCounts::Clear() {
  counts_.clear();
  total_ = 0;
}

std::vector<uint64_t> SymbolCounts::Values() const {
  std::vector<uint64_t> values;
  values.reserve(counts_.size());
  for (const auto& entry : counts_) values.push_back(entry.second);
  return values;
}

std::vector<std::pair<SymbolKey, uint64_t>> SymbolCounts::Sorted() const {
  std::vector<std::pair<SymbolKey, uint64_t>> sorted(counts_.begin(), counts_.end());
  std::sort(sorted.begin(), sorted.end());
  return sorted;
}

SymbolCounts BytesFromHistogram(const uint64_t (&histogram)[256]) {
  SymbolCounts counts(Alphabet::Bytes());
  for (int b = 0; b < 256; ++b) {
    counts.Add(SymbolKey(1, static_cast<char>(b)), histogram[b]);
  }
  return counts;
}

}  // namespace codedrift
