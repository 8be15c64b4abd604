// Clock: the time source of windows, timers and alert states, injectable so tests are fast and
// deterministic.
#pragma once

#include <atomic>
#include <chrono>

namespace codedrift {

// Monotonic nanoseconds. Implementations are thread-safe.
class Clock {
 public:
  virtual ~Clock() = default;
  virtual std::chrono::nanoseconds Now() const = 0;
};

// std::chrono::steady_clock.
class SteadyClock final : public Clock {
 public:
  std::chrono::nanoseconds Now() const override {
    return std::chrono::steady_clock::now().time_since_epoch();
  }
};

// A clock that moves only when told to (tests).
class ManualClock final : public Clock {
 public:
  std::chrono::nanoseconds Now() const override { return std::chrono::nanoseconds(now_.load()); }
  void Advance(std::chrono::nanoseconds step) { now_ += step.count(); }

 private:
  std::atomic<int64_t> now_{1'000'000'000};
};

}  // namespace codedrift
