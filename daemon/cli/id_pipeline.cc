#include "id_pipeline.h"

#include <system_error>
#include <utility>

namespace codedrift::cli {

IdPipeline::IdPipeline(CountFn count, bool threaded) : count_(std::move(count)) {
  if (!threaded) return;
  try {
    worker_ = std::thread([this] { Work(); });
  } catch (const std::system_error&) {
    // No second thread: Push counts inline; the figures do not depend on it.
  }
}

IdPipeline::~IdPipeline() { Finish(); }

std::vector<SymbolId> IdPipeline::TakeBuffer() {
  std::lock_guard<std::mutex> lock(mutex_);
  if (free_.empty()) return {};
  std::vector<SymbolId> buffer = std::move(free_.back());
  free_.pop_back();
  buffer.clear();
  return buffer;
}

void IdPipeline::Push(std::vector<SymbolId> batch) {
  if (!worker_.joinable()) {
    count_(batch);
    batch.clear();
    free_.push_back(std::move(batch));
    return;
  }
  std::unique_lock<std::mutex> lock(mutex_);
  changed_.wait(lock, [this] { return queued_.size() < kMaxQueued; });
  queued_.push_back(std::move(batch));
  changed_.notify_all();
}

void IdPipeline::Drain() {
  if (!worker_.joinable()) return;
  std::unique_lock<std::mutex> lock(mutex_);
  changed_.wait(lock, [this] { return queued_.empty() && !counting_; });
}

void IdPipeline::Finish() {
  if (!worker_.joinable()) return;
  {
    std::lock_guard<std::mutex> lock(mutex_);
    stopping_ = true;
  }
  changed_.notify_all();
  worker_.join();
}

void IdPipeline::Work() {
  std::unique_lock<std::mutex> lock(mutex_);
  while (true) {
    changed_.wait(lock, [this] { return !queued_.empty() || stopping_; });
    if (queued_.empty()) return;  // stopping, and everything is counted
    std::vector<SymbolId> batch = std::move(queued_.front());
    queued_.pop_front();
    counting_ = true;
    changed_.notify_all();  // a slot is free for Push
    lock.unlock();
    count_(batch);
    lock.lock();
    counting_ = false;
    free_.push_back(std::move(batch));
    changed_.notify_all();  // Drain may be waiting
  }
}

}  // namespace codedrift::cli
