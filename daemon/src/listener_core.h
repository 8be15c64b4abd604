// The seam between StreamListener and its per-scheme implementations. Internal to the daemon.
#pragma once

#include <chrono>
#include <cstdint>
#include <memory>
#include <string>

#include "codedrift/daemon_config.h"
#include "codedrift/result.h"

#include "stream_counters.h"
#include "stream_listener.h"

namespace codedrift {

class IoPool;

// What every implementation needs; immutable after construction, shared by its connections.
struct ListenerContext {
  StreamConfig config;
  RecordHandler handler;
  RunHandler run_handler;  // may be empty
  std::shared_ptr<StreamCounters> counters;
  ListenerLog log;

  void Log(const std::string& line) const { log(line); }
};

// One scheme's listener. Same contract as StreamListener's methods of the same names.
class ListenerCore {
 public:
  virtual ~ListenerCore() = default;
  virtual Status Start() = 0;
  virtual uint16_t bound_port() const = 0;
  virtual void Stop(std::chrono::milliseconds drain_limit) = 0;
  virtual bool WaitStopped(std::chrono::steady_clock::time_point deadline) = 0;
};

// tcp:// and unix:// (socket_listener.cc): accepts on one ingest context of the pool and
// places each connection on the next one.
std::shared_ptr<ListenerCore> MakeStreamSocketListener(
    IoPool& pool, std::shared_ptr<const ListenerContext> context);
// udp:// (datagram_listener.cc): the socket and its bursts stay on `io`.
std::shared_ptr<ListenerCore> MakeDatagramListener(boost::asio::io_context& io,
                                                   std::shared_ptr<const ListenerContext> context);

}  // namespace codedrift
