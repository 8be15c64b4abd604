#include "io_pool.h"

#include <algorithm>

namespace codedrift {

IoPool::IoPool(int ingest_threads) {
  // Concurrency hint 1: each context is run by exactly one thread (posting from others is
  // still allowed), which lets Asio skip the locking a shared scheduler needs.
  control_ = std::make_unique<boost::asio::io_context>(1);
  guards_.push_back(boost::asio::make_work_guard(*control_));
  for (int i = 0; i < std::max(1, ingest_threads); ++i) {
    contexts_.push_back(std::make_unique<boost::asio::io_context>(1));
    guards_.push_back(boost::asio::make_work_guard(*contexts_.back()));
  }
}

IoPool::~IoPool() { Stop(); }

boost::asio::io_context& IoPool::Next() {
  return *contexts_[next_.fetch_add(1, std::memory_order_relaxed) % contexts_.size()];
}

void IoPool::Start() {
  threads_.emplace_back([this] { control_->run(); });
  for (auto& context : contexts_) {
    threads_.emplace_back([&context] { context->run(); });
  }
}

void IoPool::Stop() {
  for (auto& guard : guards_) guard.reset();
  for (auto& thread : threads_) {
    if (thread.joinable()) thread.join();
  }
  threads_.clear();
}

}  // namespace codedrift
