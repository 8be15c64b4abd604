// LineMemoPool: the line memos of one tokens model, for the threads that ingest into it at
// once. A thread takes its own memo when free, else any free one, else none (the run is then
// symbolized token by token); it never waits for a memo.
#pragma once

#include <array>
#include <atomic>
#include <cstddef>
#include <memory>

#include "line_memo.h"

namespace codedrift {

class LineMemoPool {
 public:
  // Holds one memo until destroyed; memo() is nullptr when none was free.
  class Lease {
   public:
    Lease() = default;
    Lease(LineMemo* memo, std::atomic<bool>* taken) : memo_(memo), taken_(taken) {}
    Lease(const Lease&) = delete;
    Lease& operator=(const Lease&) = delete;
    ~Lease() {
      if (taken_ != nullptr) taken_->store(false, std::memory_order_release);
    }
    LineMemo* memo() const { return memo_; }

   private:
    LineMemo* memo_ = nullptr;
    std::atomic<bool>* taken_ = nullptr;
  };

  // Enough for the ingest threads of this machine kind (one per core) and a few more.
  static constexpr size_t kMemos = 4;

  Lease Take();

 private:
  // One cache line each: threads taking different memos do not share a line.
  struct alignas(64) Place {
    std::atomic<bool> taken{false};
    std::unique_ptr<LineMemo> memo;  // made on first use
  };
  std::array<Place, kMemos> places_;
};

}  // namespace codedrift
