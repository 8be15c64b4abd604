// Count windows: a ring of the last N symbols. Ingest only copies into the ring; the window is
// counted per evaluation from the ring (O(N) sequential, cheaper than per-symbol bookkeeping).
#include <algorithm>
#include <cstring>
#include <string>

#include "codedrift/byte_histogram.h"
#include "codedrift/window.h"

namespace codedrift {
namespace {

template <class T>
class RingWindow final : public Window {
 public:
  explicit RingWindow(uint64_t capacity) : ring_(std::max<uint64_t>(capacity, 1)) {}

  void PushBytes(std::span<const uint8_t> symbols) override { Push(symbols); }
  void PushIds(std::span<const SymbolId> symbols) override { Push(symbols); }

  std::unique_ptr<Window> Clone() const override { return std::make_unique<RingWindow>(*this); }

  bool CopyInto(Window& copy) const override {
    auto* to = dynamic_cast<RingWindow*>(&copy);
    if (to == nullptr || to->ring_.size() != ring_.size()) return false;
    std::copy(ring_.begin(), ring_.end(), to->ring_.begin());
    to->head_ = head_;
    to->size_ = size_;
    return true;
  }

  WindowCounts Count(int batch_count, SymbolId id_limit) const override {
    WindowCounts out;
    out.symbols = size_;
    const uint64_t batches =
        std::clamp<uint64_t>(static_cast<uint64_t>(batch_count), 1, std::max<uint64_t>(size_, 1));
    const uint64_t capacity = ring_.size();
    const uint64_t oldest = (head_ + capacity - size_) % capacity;
    for (uint64_t b = 0; b < batches; ++b) {
      const uint64_t from = size_ * b / batches;
      const uint64_t to = size_ * (b + 1) / batches;
      std::vector<uint64_t> counts(id_limit, 0);
      CountSpan((oldest + from) % capacity, to - from, counts);
      out.batches.push_back(std::move(counts));
    }
    return out;
  }

  uint64_t size() const override { return size_; }
  uint64_t memory_bytes() const override { return ring_.size() * sizeof(T); }

  WindowState ExportState() const override {
    WindowState state;
    state.kind = kStateKind;
    auto& out = Contents(state);
    out.reserve(size_);
    const uint64_t capacity = ring_.size();
    const uint64_t oldest = (head_ + capacity - size_) % capacity;
    const uint64_t first = std::min(size_, capacity - oldest);  // up to the end of the ring
    out.insert(out.end(), ring_.begin() + static_cast<std::ptrdiff_t>(oldest),
               ring_.begin() + static_cast<std::ptrdiff_t>(oldest + first));
    out.insert(out.end(), ring_.begin(),
               ring_.begin() + static_cast<std::ptrdiff_t>(size_ - first));
    return state;
  }

  Status ImportState(const WindowState& state, [[maybe_unused]] SymbolId id_limit) override {
    if (state.kind != kStateKind) return Error{"checkpoint holds another kind of window"};
    const auto& in = Contents(state);
    if (in.size() > ring_.size()) {
      return Error{"checkpoint holds " + std::to_string(in.size()) + " symbols for a window of " +
                   std::to_string(ring_.size())};
    }
    if constexpr (sizeof(T) > 1) {
      for (T id : in) {
        if (id >= id_limit) return Error{"checkpoint window holds an id the symbolizer lacks"};
      }
    }
    std::copy(in.begin(), in.end(), ring_.begin());
    size_ = in.size();
    head_ = size_ % ring_.size();
    return Ok{};
  }

 private:
  template <class U>
  void Push(std::span<const U> symbols) {
    const uint64_t capacity = ring_.size();
    if (symbols.size() >= capacity) symbols = symbols.last(capacity);
    size_t done = 0;
    while (done < symbols.size()) {
      const size_t n = std::min<uint64_t>(symbols.size() - done, capacity - head_);
      std::copy_n(symbols.begin() + static_cast<std::ptrdiff_t>(done), n,
                  ring_.begin() + static_cast<std::ptrdiff_t>(head_));
      head_ = (head_ + n) % capacity;
      done += n;
    }
    size_ = std::min<uint64_t>(size_ + symbols.size(), capacity);
  }

  // Counts `length` symbols starting at ring position `start` (wrapping).
  void CountSpan(uint64_t start, uint64_t length, std::vector<uint64_t>& counts) const {
    const uint64_t capacity = ring_.size();
    while (length > 0) {
      const uint64_t n = std::min(length, capacity - start);
      CountContiguous(ring_.data() + start, n, counts);
      start = (start + n) % capacity;
      length -= n;
    }
  }

  static void CountContiguous(const T* data, uint64_t n, std::vector<uint64_t>& counts) {
    if constexpr (sizeof(T) == 1) {
      uint64_t histogram[256] = {};
      CountBytes(std::string_view(reinterpret_cast<const char*>(data), n), histogram);
      for (size_t s = 0; s < 256 && s < counts.size(); ++s) counts[s] += histogram[s];
    } else {
      for (uint64_t i = 0; i < n; ++i) {
        if (data[i] < counts.size()) ++counts[data[i]];
      }
    }
  }

  static constexpr WindowStateKind kStateKind =
      sizeof(T) == 1 ? WindowStateKind::kByteRing : WindowStateKind::kIdRing;
  static auto& Contents(WindowState& state) {
    if constexpr (sizeof(T) == 1) {
      return state.bytes;
    } else {
      return state.ids;
    }
  }
  static const auto& Contents(const WindowState& state) {
    if constexpr (sizeof(T) == 1) {
      return state.bytes;
    } else {
      return state.ids;
    }
  }

  std::vector<T> ring_;
  uint64_t head_ = 0;  // next write position
  uint64_t size_ = 0;
};

}  // namespace

std::unique_ptr<Window> MakeByteCountWindow(uint64_t symbols) {
  return std::make_unique<RingWindow<uint8_t>>(symbols);
}

std::unique_ptr<Window> MakeIdCountWindow(uint64_t symbols) {
  return std::make_unique<RingWindow<uint32_t>>(symbols);
}

}  // namespace codedrift
