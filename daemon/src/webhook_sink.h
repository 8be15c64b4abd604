// WebhookSink: the daemon's webhook alert sink (config `alerts: {webhook: {url, timeout,
// retries}}`). Each alert notice becomes one HTTP/1.1 POST of a JSON document to the
// configured plain-http URL, sent asynchronously on the caller's io_context. Beast and Asio stay
// inside webhook_sink.cc.
//
// The document (our own field names, lower snake case):
//   {"stream": "uplink", "model": "bytes",
//    "state": "stale", "previous_state": "drifting",   // CodeStateName() of to/from
//    "reason": "saving 12% over 5% for 10m",
//    "time": 1700000000.25,                             // unix seconds, fractional
//    "figures": {...},                                  // as given by the caller; {} if none
//    "proposal": {"url": "...", "checksum": "..."}}     // null without a proposal; a missing
//                                                       // checksum is null
// Headers: Content-Type: application/json, Host from the URL (port omitted when 80),
// User-Agent: codedriftd, Connection: close, and X-Codedrift-Delivery:
// <stream>/<model>/<sequence>, identical on every attempt of one notice, so a receiver can
// drop the duplicate a retry after a lost response produces.
//
// Delivery: one notice in flight at a time (notices arrive in the order they were queued);
// a 2xx status is delivered, anything else (no connection, timeout, other status) is a failed
// attempt. After a failed attempt the notice waits an exponential, jittered backoff and is sent
// again, at most `retries` times; then it is dropped (counted, logged) and the next one goes.
#pragma once

#include <chrono>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "codedrift/config_values.h"
#include "codedrift/daemon_config.h"

namespace boost::asio {
class io_context;
}  // namespace boost::asio

namespace codedrift {

// The header that names a delivery: "<stream>/<model>/<sequence>".
inline constexpr char kWebhookDeliveryHeader[] = "X-Codedrift-Delivery";

// One state change to announce. Plain value type.
struct AlertNotice {
  std::string stream;
  std::string model;
  std::string from_state;  // CodeStateName(change.from)
  std::string to_state;    // CodeStateName(change.to)
  std::string reason;
  nlohmann::json figures;  // an object of the model's figures (saving_ratio, ...), or null
  std::optional<std::string> proposal_url;
  std::optional<std::string> proposal_checksum;
  double unix_time = 0;   // when the state changed, seconds since the epoch
  uint64_t sequence = 0;  // unique per stream/model, so receivers can drop duplicates
};

// The JSON document WebhookSink posts for `notice` (see the file comment).
nlohmann::json WebhookDocument(const AlertNotice& notice);
// The X-Codedrift-Delivery value for `notice`.
std::string WebhookDeliveryKey(const AlertNotice& notice);

struct WebhookOptions {
  HttpUrl target;                           // host (IP literal or name), port, path and query
  std::chrono::milliseconds timeout{2000};  // per attempt: resolve, connect, send, status line
  uint32_t retries = 5;                     // attempts after the first before a notice is dropped
  size_t queue_limit = 256;                 // notices waiting behind the one in flight (>= 1)
  std::chrono::milliseconds first_backoff{500};  // pause after the first failed attempt
  std::chrono::milliseconds max_backoff{30000};  // the doubling stops here

  // The config's url, timeout and retries; the other fields keep their defaults.
  static WebhookOptions FromConfig(const WebhookConfig& config);
};

struct WebhookCounters {
  uint64_t delivered = 0;              // notices answered with 2xx
  uint64_t failed_attempts = 0;        // attempts that did not end in 2xx (every one counts)
  uint64_t dropped_after_retries = 0;  // notices given up after 1 + retries failed attempts
  uint64_t dropped_queue_full = 0;     // oldest waiting notices pushed out by Enqueue
  size_t queued = 0;                   // waiting plus the one in flight (or backing off)
};

// Delivers notices to one webhook. Enqueue, counters, Stop, WaitFor and WaitIdle are
// thread-safe and never wait on the network; the io_context may run on any number of threads
// (the sink's work runs on its own strand). Destroying the sink stops it; it must be destroyed
// before its io_context.
class WebhookSink {
 public:
  WebhookSink(boost::asio::io_context& io, WebhookOptions options);
  ~WebhookSink();
  WebhookSink(const WebhookSink&) = delete;
  WebhookSink& operator=(const WebhookSink&) = delete;

  // Queues `notice` and returns at once. With queue_limit notices already waiting, the oldest
  // waiting one is dropped (counted in dropped_queue_full). Ignored after Stop.
  void Enqueue(AlertNotice notice);

  WebhookCounters counters() const;

  // Abandons the attempt in flight and the backoff; nothing more is sent. Undelivered notices
  // stay counted in `queued`. Returns at once; idempotent. Call WaitIdle first to flush.
  void Stop();

  // Waits until `done(counters())` holds (true) or the deadline passes or the sink stops
  // (false unless `done` holds then). Must not be called from a thread running the io_context.
  bool WaitFor(const std::function<bool(const WebhookCounters&)>& done,
               std::chrono::steady_clock::time_point deadline) const;
  // WaitFor(queued == 0): every notice so far delivered or dropped.
  bool WaitIdle(std::chrono::steady_clock::time_point deadline) const;

 private:
  struct Impl;
  std::shared_ptr<Impl> impl_;
};

}  // namespace codedrift
