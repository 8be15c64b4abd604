// StreamListener: one stream's ingest endpoint (DESIGN.md §4 "socket ─► framer ─► record"):
// tcp:// or unix:// with lines/u16be/u32be framing, or udp:// with one datagram per record.
// Boost.Asio stays inside the .cc files.
#pragma once

#include <chrono>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <string_view>

#include "codedrift/daemon_config.h"
#include "codedrift/result.h"

#include "stream_counters.h"

namespace codedrift {

class IoPool;

// Receives every record of the stream (for `lines`, the terminating newline included). The view
// is valid during the call only. Called from io threads, possibly from several at once.
using RecordHandler = std::function<void(std::string_view record)>;
// Optional, `lines` framing only: receives `records` whole records (each ending in '\n') lying
// back to back in one receive buffer, in one call instead of one call each. Records that are
// not whole in that buffer still go to the RecordHandler, in order with the runs.
using RunHandler = std::function<void(std::string_view run, uint64_t records)>;
// Receives one human-readable log line (bind results, receive-buffer grants, failures).
using ListenerLog = std::function<void(std::string_view line)>;

class ListenerCore;  // the per-scheme implementation (stream_listener.cc, datagram_listener.cc)

// Listens on `config.listen` and hands records to the handler, enforcing the stream's limits
// and counting into `counters`:
//   tcp/udp peer outside `allow`    connections_rejected{not_allowed} (udp: records_rejected),
//                                   closed before a byte is read
//   over max_connections            connections_rejected{too_many}, closed at once
//   no byte for idle_timeout        connection closed, connections_closed{idle}
//   line over max_record_bytes      records_rejected{overlong} (truncated or dropped)
//   length over max_record_bytes    records_rejected{oversized_frame}, connection closed
//   ends inside a frame             records_rejected{truncated_frame}
//   datagram over max_record_bytes  records_rejected{oversized_datagram}, dropped
// Reads go into a 64 KiB buffer per connection; everything is asynchronous, so a slow or
// stuck client never holds up another. The acceptor, each connection and a udp socket go to
// the pool's ingest contexts in turn; Start, Stop and WaitStopped are thread-safe. Connections
// keep the shared state alive, so the listener may be destroyed while the pool still runs (it
// stops first); destroy it before the pool.
class StreamListener {
 public:
  // `counters` must not be null; the config is copied. Without `log`, lines go to std::clog.
  StreamListener(IoPool& pool, const StreamConfig& config, std::shared_ptr<StreamCounters> counters,
                 RecordHandler handler, ListenerLog log = nullptr,
                 RunHandler run_handler = nullptr);
  ~StreamListener();
  StreamListener(const StreamListener&) = delete;
  StreamListener& operator=(const StreamListener&) = delete;

  // Binds and starts receiving. A unix socket path left by a dead process is replaced; one a
  // live process listens on is an error. Logs the bound address (and, for udp, the receive
  // buffer the kernel granted).
  Status Start();
  // tcp/udp: the port bound (the ephemeral one when the config says 0); unix and before
  // Start: 0.
  uint16_t bound_port() const;

  // Stops accepting at once, then lets each connection read what its peer already sent (udp:
  // what the kernel already queued), flushes the framer (an unterminated final line is
  // delivered; a partial frame counts as truncated_frame) and closes. Connections still
  // sending after `drain_limit` are closed then. Returns at once; counts closures as
  // connections_closed{stopped}. A unix socket file is removed.
  void Stop(std::chrono::milliseconds drain_limit = std::chrono::seconds(2));
  // After Stop: waits until every connection is closed or the deadline passes (false). Must
  // not be called from an io thread of this listener.
  bool WaitStopped(std::chrono::steady_clock::time_point deadline);

 private:
  std::shared_ptr<ListenerCore> core_;
};

}  // namespace codedrift
