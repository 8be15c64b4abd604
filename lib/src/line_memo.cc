#include "line_memo.h"

#include <algorithm>

namespace codedrift {

LineMemo::LineMemo() : slots_(kSlots, kEmpty) {}

bool LineMemo::Use(uint64_t generation, size_t run_bytes) {
  if (generation != generation_) {
    Clear();
    generation_ = generation;
  }
  if (off_bytes_ == 0) return true;
  off_bytes_ -= std::min<uint64_t>(off_bytes_, run_bytes);
  return false;
}

void LineMemo::Remember(const LineScan& line, std::span<const SymbolId> ids) {
  const size_t text_bytes = line.chunks() * LineScan::kChunk;
  if (entries_.size() == kMaxEntries || text_.size() + text_bytes > kMaxTextBytes ||
      ids_.size() + ids.size() + kIdPadding > kMaxIds) {
    Clear();
  }
  size_t slot = line.hash & (kSlots - 1);
  while (slots_[slot] != kEmpty) slot = (slot + 1) & (kSlots - 1);
  slots_[slot] = static_cast<uint32_t>(entries_.size());
  entries_.push_back(Entry{line.hash, static_cast<uint32_t>(text_.size()),
                           static_cast<uint32_t>(ids_.size()), static_cast<uint16_t>(line.length),
                           static_cast<uint16_t>(ids.size())});
  text_.insert(text_.end(), line.text, line.text + text_bytes);
  ids_.insert(ids_.end(), ids.begin(), ids.end());
  ids_.insert(ids_.end(), kIdPadding, 0);
}

void LineMemo::Clear() {
  if (!entries_.empty()) ++stats_.clears;
  std::fill(slots_.begin(), slots_.end(), kEmpty);
  entries_.clear();
  text_.clear();
  ids_.clear();
}

void LineMemo::JudgeStretch() {
  if (judged_hits_ * kMinHitsPer < judged_lookups_) {
    // Lines this varied would only fill the memo with lines that never come back.
    ++stats_.turned_off;
    off_bytes_ = kOffBytes;
    Clear();
  }
  judged_lookups_ = 0;
  judged_hits_ = 0;
}

}  // namespace codedrift
