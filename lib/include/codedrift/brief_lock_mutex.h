// BriefLockMutex: a mutex for critical sections of a few microseconds (a model's window push).
// A thread that finds it held retries for a bounded while before sleeping in the kernel: the
// holder is running on the other core and is about to release it, and a futex sleep and wake
// would cost more than the wait.
#pragma once

#include <mutex>

#if defined(__x86_64__)
#include <immintrin.h>
#endif

namespace codedrift {

class BriefLockMutex {
 public:
  void lock() {
    for (int i = 0; i < kSpins; ++i) {
      if (mutex_.try_lock()) return;
#if defined(__x86_64__)
      _mm_pause();
#endif
    }
    mutex_.lock();
  }
  bool try_lock() { return mutex_.try_lock(); }
  void unlock() { mutex_.unlock(); }

 private:
  // About 10-40 microseconds of retries (a pause is 10-140 cycles, CPU dependent): longer than
  // a 64 KiB window push, far shorter than a scheduler slice.
  static constexpr int kSpins = 1000;
  std::mutex mutex_;
};

}  // namespace codedrift
