#include "line_memo_pool.h"

namespace codedrift {
namespace {

// Each thread's first choice of memo, the same in every pool: threads spread over them in
// the order they first ingest.
size_t HomePlace() {
  static std::atomic<size_t> next_home{0};
  thread_local const size_t home = next_home.fetch_add(1, std::memory_order_relaxed);
  return home;
}

}  // namespace

LineMemoPool::Lease LineMemoPool::Take() {
  const size_t home = HomePlace();
  for (size_t i = 0; i < kMemos; ++i) {
    Place& place = places_[(home + i) % kMemos];
    if (place.taken.load(std::memory_order_relaxed) ||
        place.taken.exchange(true, std::memory_order_acquire)) {
      continue;
    }
    if (place.memo == nullptr) place.memo = std::make_unique<LineMemo>();
    return Lease(place.memo.get(), &place.taken);
  }
  return {};
}

}  // namespace codedrift
