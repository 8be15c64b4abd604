// Windows: the recent symbols a model measures, by count (exact: the symbol leaving is gone)
// or by time (bucketed). Ingest copies or counts; counting a window runs per evaluation.
#pragma once

#include <chrono>
#include <cstdint>
#include <memory>
#include <span>
#include <vector>

#include "codedrift/clock.h"
#include "codedrift/result.h"
#include "codedrift/symbolizer.h"

namespace codedrift {

struct WindowSpec {
  uint64_t symbols = 0;              // count window: the last N symbols
  std::chrono::nanoseconds span{0};  // time window: the last `span`, in `buckets` buckets
  int buckets = 0;

  bool by_time() const { return span.count() > 0; }
};

// Counts of a window cut into consecutive batches, oldest first, each dense by symbol id.
// Batches make the older/newer halves and the batch-means confidence bound.
struct WindowCounts {
  std::vector<std::vector<uint64_t>> batches;
  uint64_t symbols = 0;
};

// A window's contents for checkpoints; only the members of its kind are used.
enum class WindowStateKind { kNone, kByteRing, kIdRing, kBuckets };
struct WindowState {
  WindowStateKind kind = WindowStateKind::kNone;  // kNone: the window cannot be saved
  std::vector<uint8_t> bytes;                     // kByteRing: the symbols, oldest first
  std::vector<SymbolId> ids;                      // kIdRing: the symbols, oldest first
  std::vector<std::vector<uint64_t>> buckets;     // kBuckets: counts by id, oldest bucket first
  // kBuckets: when the newest bucket began, on the window's clock.
  std::chrono::nanoseconds newest_bucket_start{0};
};

// A window over symbol ids of element type T (uint8_t for single bytes, uint32_t otherwise).
// Not thread-safe: the owning Model serialises access.
class Window {
 public:
  virtual ~Window() = default;
  virtual void PushBytes(std::span<const uint8_t> symbols) = 0;
  virtual void PushIds(std::span<const SymbolId> symbols) = 0;
  // Copies what is needed to count the window later without holding the model's lock.
  virtual std::unique_ptr<Window> Clone() const = 0;
  // Clone into `copy`, a window made from the same spec, reusing its storage: a count window's
  // copy then allocates nothing, so its pages can be touched before the model's lock is taken.
  // False (and `copy` unchanged) when `copy` is not a window of this kind and size.
  virtual bool CopyInto(Window& copy) const = 0;
  // Counts the window in `batch_count` batches (fewer when there is too little data).
  virtual WindowCounts Count(int batch_count, SymbolId id_limit) const = 0;
  // Symbols currently in the window.
  virtual uint64_t size() const = 0;
  // Bytes of memory the window holds (RSS planning).
  virtual uint64_t memory_bytes() const = 0;

  // Checkpoints (never on the hot path): the contents, and taking them over into a fresh window
  // of the same spec. Import refuses a state of another kind or size, or with an id at or above
  // `id_limit`, and then leaves the window as it was.
  virtual WindowState ExportState() const { return {}; }
  virtual Status ImportState(const WindowState& /*state*/, SymbolId /*id_limit*/) {
    return Error{"this window kind cannot be restored from a checkpoint"};
  }
};

// Count window over single bytes (ring of bytes) or ids (ring of uint32).
std::unique_ptr<Window> MakeByteCountWindow(uint64_t symbols);
std::unique_ptr<Window> MakeIdCountWindow(uint64_t symbols);
// Time window: `buckets` buckets of span/buckets each; time read from `clock` on every push.
std::unique_ptr<Window> MakeTimeWindow(std::chrono::nanoseconds span, int buckets,
                                       const Clock& clock);

}  // namespace codedrift
