// Two-stage counting for one symbolizer: the calling thread reads and symbolizes, a second
// thread counts the ids, batch by batch, so the two costs overlap instead of adding up.
#pragma once

#include <condition_variable>
#include <deque>
#include <functional>
#include <mutex>
#include <thread>
#include <vector>

#include "codedrift/symbolizer.h"

namespace codedrift::cli {

// Runs `count` on every pushed batch, in push order, on one worker thread (or inline when
// threaded is false or no thread can be started). Push, Drain and Finish are for the one
// producing thread; `count` runs on the worker only. At most kMaxQueued batches wait, so
// memory stays bounded when counting is the slower stage.
class IdPipeline {
 public:
  using CountFn = std::function<void(const std::vector<SymbolId>&)>;
  static constexpr size_t kMaxQueued = 4;

  IdPipeline(CountFn count, bool threaded);
  ~IdPipeline();  // Finish()
  IdPipeline(const IdPipeline&) = delete;
  IdPipeline& operator=(const IdPipeline&) = delete;

  // An empty batch to fill (recycled from counted ones).
  std::vector<SymbolId> TakeBuffer();
  // Hands a batch over; blocks while kMaxQueued batches wait.
  void Push(std::vector<SymbolId> batch);
  // Returns once every pushed batch is counted (the counts may then be read).
  void Drain();
  // Drains and stops the worker.
  void Finish();

 private:
  void Work();

  CountFn count_;
  std::thread worker_;
  std::mutex mutex_;
  std::condition_variable changed_;
  // Guarded by mutex_:
  std::deque<std::vector<SymbolId>> queued_;
  std::vector<std::vector<SymbolId>> free_;
  bool counting_ = false;
  bool stopping_ = false;
};

}  // namespace codedrift::cli
