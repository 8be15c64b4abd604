// EvaluationLoop: the daemon's one evaluation thread. Runs `tick` every interval and tasks
// posted to it in between (proposal requests), so model evaluators need no locks.
#pragma once

#include <chrono>
#include <condition_variable>
#include <deque>
#include <functional>
#include <mutex>
#include <thread>

namespace codedrift {

// Thread-safe: Post and Stop may be called from any thread.
class EvaluationLoop {
 public:
  EvaluationLoop(std::chrono::milliseconds interval, std::function<void()> tick);
  ~EvaluationLoop();  // stops and joins

  void Start();
  // Runs `task` on the loop's thread as soon as it is free.
  void Post(std::function<void()> task);
  // Finishes the current tick or task, then joins the thread. Idempotent.
  void Stop();

 private:
  void Run();
  // Runs every queued task with `lock` (on mutex_) released around each; returns locked.
  void RunQueuedTasks(std::unique_lock<std::mutex>& lock);

  const std::chrono::milliseconds interval_;
  const std::function<void()> tick_;
  std::mutex mutex_;  // guards tasks_ and stopping_
  std::condition_variable wake_;
  std::deque<std::function<void()>> tasks_;
  bool stopping_ = false;
  std::thread thread_;
};

}  // namespace codedrift
