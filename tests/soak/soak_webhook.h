// A webhook receiver for the soak benchmark that fails half the time: it answers 500 to every
// other request (the first, third, ...) and 200 to the rest, so the daemon's webhook sink
// retries and backs off all through the run.
#pragma once

#include <atomic>
#include <cstdint>
#include <set>
#include <string>
#include <thread>

#include "codedrift/result.h"

namespace codedrift::soak {

// Blocking HTTP/1.1 on 127.0.0.1:0, one request per connection, from one thread. Counters are
// thread-safe; Stop joins. Not copyable.
class FlakyWebhookReceiver {
 public:
  FlakyWebhookReceiver() = default;
  ~FlakyWebhookReceiver();
  FlakyWebhookReceiver(const FlakyWebhookReceiver&) = delete;
  FlakyWebhookReceiver& operator=(const FlakyWebhookReceiver&) = delete;

  Status Start();
  uint16_t port() const { return port_; }
  uint64_t answered_ok() const { return ok_.load(); }
  uint64_t answered_failed() const { return failed_.load(); }
  // Distinct X-Codedrift-Delivery keys of the requests answered 200.
  uint64_t distinct_delivered() const { return distinct_.load(); }
  // Requests that were not a POST with a JSON body naming a stream and a model.
  uint64_t malformed() const { return malformed_.load(); }
  void Stop();

 private:
  void Loop();
  void Serve(int fd);

  int listen_fd_ = -1;
  uint16_t port_ = 0;
  std::atomic<bool> stopping_{false};
  std::atomic<uint64_t> ok_{0}, failed_{0}, distinct_{0}, malformed_{0};
  uint64_t requests_ = 0;                 // receiver thread only
  std::set<std::string> delivered_keys_;  // receiver thread only
  std::thread thread_;
};

}  // namespace codedrift::soak
