// IoPool: the daemon's io threads, each running its own io_context. A context's handlers all
// run on its one thread, so a connection placed on a context never hops between cores (its
// receive buffer, framer and the model counts it touches stay in one cache) and the idle thread
// sleeps in the kernel instead of waking for the other's events. The control plane (HTTP,
// signals, the webhook) has a context and thread of its own: a reload that waits there for
// listeners to stop never blocks the threads that stop them, and a slow scrape never delays
// a read.
#pragma once

#include <atomic>
#include <cstddef>
#include <memory>
#include <thread>
#include <vector>

#include <boost/asio/executor_work_guard.hpp>
#include <boost/asio/io_context.hpp>

namespace codedrift {

// Thread-safe: control() and Next() may be called from any thread. Start once, Stop once (the
// destructor stops if needed); destroy everything that uses the contexts before the pool.
class IoPool {
 public:
  // `ingest_threads` contexts (at least one) for sockets, plus the control context.
  explicit IoPool(int ingest_threads);
  ~IoPool();
  IoPool(const IoPool&) = delete;
  IoPool& operator=(const IoPool&) = delete;

  // Where the control plane runs: HTTP, signals, the webhook.
  boost::asio::io_context& control() { return *control_; }
  // The ingest contexts in turn, for acceptors, accepted connections and datagram sockets.
  boost::asio::io_context& Next();
  size_t ingest_size() const { return contexts_.size(); }

  // Starts one thread per context.
  void Start();
  // Lets each context finish its remaining work, then joins the threads.
  void Stop();

 private:
  using WorkGuard = boost::asio::executor_work_guard<boost::asio::io_context::executor_type>;

  std::unique_ptr<boost::asio::io_context> control_;
  std::vector<std::unique_ptr<boost::asio::io_context>> contexts_;  // ingest
  std::vector<WorkGuard> guards_;
  std::vector<std::thread> threads_;
  std::atomic<size_t> next_{0};
};

}  // namespace codedrift
