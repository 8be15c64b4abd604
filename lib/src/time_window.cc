// Time windows: counts in buckets of span/buckets; buckets older than the span are dropped as
// time moves on. Ingest counts into the current bucket.
#include <algorithm>
#include <string>

#include "codedrift/window.h"

namespace codedrift {
namespace {

class BucketWindow final : public Window {
 public:
  BucketWindow(std::chrono::nanoseconds span, int buckets, const Clock& clock)
      : clock_(&clock),
        bucket_ns_(std::max<int64_t>(span.count() / std::max(buckets, 1), 1)),
        buckets_(static_cast<size_t>(std::max(buckets, 1))),
        sizes_(buckets_.size(), 0) {
    current_ = BucketIndex();
  }

  void PushBytes(std::span<const uint8_t> symbols) override { Push(symbols); }
  void PushIds(std::span<const SymbolId> symbols) override { Push(symbols); }

  std::unique_ptr<Window> Clone() const override {
    auto copy = std::make_unique<BucketWindow>(*this);
    copy->Rotate(BucketIndex());
    return copy;
  }

  bool CopyInto(Window& copy) const override {
    auto* to = dynamic_cast<BucketWindow*>(&copy);
    if (to == nullptr || to->buckets_.size() != buckets_.size()) return false;
    *to = *this;  // buckets grow with the alphabet, so this may allocate (they are small)
    to->Rotate(BucketIndex());
    return true;
  }

  WindowCounts Count(int batch_count, SymbolId id_limit) const override {
    // Buckets oldest first: the one after the current slot is the oldest.
    const size_t n = buckets_.size();
    const size_t batches = std::clamp<size_t>(static_cast<size_t>(batch_count), 1, n);
    WindowCounts out;
    for (size_t b = 0; b < batches; ++b) {
      std::vector<uint64_t> counts(id_limit, 0);
      for (size_t i = n * b / batches; i < n * (b + 1) / batches; ++i) {
        const auto& bucket = buckets_[(Slot(current_) + 1 + i) % n];
        for (size_t s = 0; s < bucket.size() && s < counts.size(); ++s) counts[s] += bucket[s];
      }
      out.batches.push_back(std::move(counts));
    }
    out.symbols = size();
    return out;
  }

  uint64_t size() const override {
    uint64_t total = 0;
    for (uint64_t s : sizes_) total += s;
    return total;
  }

  uint64_t memory_bytes() const override {
    uint64_t bytes = 0;
    for (const auto& bucket : buckets_) bytes += bucket.capacity() * sizeof(uint64_t);
    return bytes;
  }

  // Buckets as they stand (expired ones are dropped by the next push or clone, here or after
  // the import), oldest first, with the newest bucket's start time.
  WindowState ExportState() const override {
    WindowState state;
    state.kind = WindowStateKind::kBuckets;
    const size_t n = buckets_.size();
    for (size_t i = 0; i < n; ++i) state.buckets.push_back(buckets_[(Slot(current_) + 1 + i) % n]);
    state.newest_bucket_start = std::chrono::nanoseconds(current_ * bucket_ns_);
    return state;
  }

  // The newest bucket goes where its start time falls on this window's clock; buckets that
  // would sit before time zero of the clock (a checkpoint older than the clock) are dropped.
  Status ImportState(const WindowState& state, SymbolId id_limit) override {
    if (state.kind != WindowStateKind::kBuckets) {
      return Error{"checkpoint holds another kind of window"};
    }
    const size_t n = buckets_.size();
    if (state.buckets.size() != n) {
      return Error{"checkpoint holds " + std::to_string(state.buckets.size()) +
                   " buckets for a window of " + std::to_string(n)};
    }
    for (const auto& bucket : state.buckets) {
      if (bucket.size() > id_limit) {
        return Error{"checkpoint window holds an id the symbolizer lacks"};
      }
    }
    const int64_t start = state.newest_bucket_start.count();
    const int64_t newest =
        start >= 0 ? start / bucket_ns_ : -((-start + bucket_ns_ - 1) / bucket_ns_);
    const int64_t now_index = BucketIndex();
    for (auto& bucket : buckets_) bucket.clear();
    std::fill(sizes_.begin(), sizes_.end(), 0);
    current_ = std::max<int64_t>(newest, 0);
    if (newest > now_index || now_index - newest >= static_cast<int64_t>(n)) {
      current_ = now_index;  // every bucket has expired (or the clock went back): start empty
      return Ok{};
    }
    for (size_t i = 0; i < n; ++i) {
      const int64_t index = newest - static_cast<int64_t>(n - 1 - i);
      if (index < 0) continue;
      buckets_[Slot(index)] = state.buckets[i];
      uint64_t total = 0;
      for (uint64_t c : state.buckets[i]) total += c;
      sizes_[Slot(index)] = total;
    }
    return Ok{};
  }

 private:
  int64_t BucketIndex() const { return clock_->Now().count() / bucket_ns_; }
  size_t Slot(int64_t index) const { return static_cast<size_t>(index) % buckets_.size(); }

  // Clears the buckets that fell out of the span since the last push.
  void Rotate(int64_t now_index) {
    if (now_index <= current_) return;
    const int64_t steps =
        std::min<int64_t>(now_index - current_, static_cast<int64_t>(buckets_.size()));
    for (int64_t i = 1; i <= steps; ++i) {
      const size_t slot = Slot(current_ + i);
      std::fill(buckets_[slot].begin(), buckets_[slot].end(), 0);
      sizes_[slot] = 0;
    }
    current_ = now_index;
  }

  template <class U>
  void Push(std::span<const U> symbols) {
    Rotate(BucketIndex());
    auto& bucket = buckets_[Slot(current_)];
    for (U s : symbols) {
      if (s >= bucket.size()) bucket.resize(static_cast<size_t>(s) + 1, 0);
      ++bucket[s];
    }
    sizes_[Slot(current_)] += symbols.size();
  }

  const Clock* clock_;
  int64_t bucket_ns_;
  std::vector<std::vector<uint64_t>> buckets_;
  std::vector<uint64_t> sizes_;
  int64_t current_ = 0;
};

}  // namespace

std::unique_ptr<Window> MakeTimeWindow(std::chrono::nanoseconds span, int buckets,
                                       const Clock& clock) {
  return std::make_unique<BucketWindow>(span, buckets, clock);
}

}  // namespace codedrift
