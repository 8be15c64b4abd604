#include "evaluation_loop.h"

namespace codedrift {

EvaluationLoop::EvaluationLoop(std::chrono::milliseconds interval, std::function<void()> tick)
    : interval_(interval), tick_(std::move(tick)) {}

EvaluationLoop::~EvaluationLoop() { Stop(); }

void EvaluationLoop::Start() {
  thread_ = std::thread([this] { Run(); });
}

void EvaluationLoop::Post(std::function<void()> task) {
  {
    std::lock_guard lock(mutex_);
    tasks_.push_back(std::move(task));
  }
  wake_.notify_one();
}

void EvaluationLoop::Stop() {
  {
    std::lock_guard lock(mutex_);
    stopping_ = true;
  }
  wake_.notify_one();
  if (thread_.joinable()) thread_.join();
}

void EvaluationLoop::Run() {
  auto next = std::chrono::steady_clock::now() + interval_;
  std::unique_lock lock(mutex_);
  while (!stopping_) {
    wake_.wait_until(lock, next, [this] { return stopping_ || !tasks_.empty(); });
    RunQueuedTasks(lock);
    if (stopping_) break;
    if (std::chrono::steady_clock::now() >= next) {
      lock.unlock();
      tick_();
      lock.lock();
      // Keep the cadence; after a long stall, restart it from now instead of catching up.
      next += interval_;
      const auto now = std::chrono::steady_clock::now();
      if (next < now) next = now + interval_;
    }
  }
  // Tasks posted while stopping are answered rather than left waiting.
  RunQueuedTasks(lock);
}

void EvaluationLoop::RunQueuedTasks(std::unique_lock<std::mutex>& lock) {
  while (!tasks_.empty()) {
    auto task = std::move(tasks_.front());
    tasks_.pop_front();
    lock.unlock();
    task();
    lock.lock();
  }
}

}  // namespace codedrift
