// Loopback load for the daemon benchmarks (`make bench`): a capture cut into per-connection
// slices, a TCP sender over N connections, a paced UDP sender, and the plain receivers that
// serve as the same-run baseline. Blocking POSIX sockets and threads, nothing else, so the
// baseline is as plain as a receiver gets.
#pragma once

#include <algorithm>
#include <atomic>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <string_view>
#include <thread>
#include <vector>

#include "codedrift/result.h"

namespace codedrift::bench {

// Binds a socket of `type` to 127.0.0.1:0; returns the fd (or -1) and sets `port`.
int BindLoopback(int type, uint16_t& port);
// Accepts connections on `listen_fd` and hands each to `serve` until `stopping` is set (checked
// after each accept, so Stop wakes it by connecting or shutting the socket) or accept fails.
void AcceptUntilStopped(int listen_fd, const std::atomic<bool>& stopping,
                        const std::function<void(int)>& serve);

// Wall and CPU seconds of the calling thread, for throughput per CPU-second on a shared machine.
double WallSeconds();
double ThreadCpuSeconds();

// Part of a capture sent over one connection: `bytes` bytes from line start `start`, wrapping
// around the capture's end, ending just after a newline; `records` lines.
struct Slice {
  uint64_t start = 0;
  uint64_t bytes = 0;
  uint64_t records = 0;
};

// A newline-terminated capture held in memory. Immutable; share freely between threads.
class Capture {
 public:
  static Result<Capture> Load(const std::string& path);
  explicit Capture(std::string text);

  std::string_view text() const { return text_; }
  // Slices of `connections` connections carrying about `total_bytes` together, each starting
  // at a different line so parallel connections do not carry identical bytes in step.
  std::vector<Slice> Slices(int connections, uint64_t total_bytes) const;
  // Calls `record(line)` for each line of the slice, newline included.
  template <class F>
  void ForEachRecord(const Slice& slice, F&& record) const;
  // `count` datagrams of `size` bytes cut from the capture's text (a datagram is a record).
  std::vector<std::string> Datagrams(size_t count, size_t size) const;

 private:
  uint64_t LineStartAtOrAfter(uint64_t offset) const;

  std::string text_;
};

// One TCP sending run as its sender saw it.
struct TcpRun {
  uint64_t bytes = 0;
  uint64_t records = 0;
  double seconds = 0;  // first byte sent to the last connection's close by the receiver
  std::string error;   // empty on success
};

// Connects one socket per slice to 127.0.0.1:port, then sends every slice from its own thread
// at once; each connection half-closes and waits for the receiver's close, which a receiver
// gives only after reading everything, so the time covers what the receiver consumed.
TcpRun SendTcp(uint16_t port, const Capture& capture, const std::vector<Slice>& slices);

// One paced UDP run.
struct UdpRun {
  uint64_t sent = 0;
  double seconds = 0;
  double rate() const { return seconds > 0 ? static_cast<double>(sent) / seconds : 0; }
};

// Sends `datagrams` (cycling) to 127.0.0.1:port at `rate` per second in all for `seconds`,
// from `senders` threads with a socket each, in sendmmsg batches, so that the senders are not
// the bottleneck below their ceiling.
UdpRun SendUdp(uint16_t port, const std::vector<std::string>& datagrams, double rate,
               double seconds, int senders);

// The baseline: a TCP receiver on 127.0.0.1:0 with one thread per connection that recv()s into
// a 64 KiB buffer (the daemon's read size), discards, and closes at end of stream. Counts
// bytes and the CPU time its connection threads used. Thread-safe counters; Stop joins.
class PlainTcpReceiver {
 public:
  PlainTcpReceiver();
  ~PlainTcpReceiver();
  Status Start();
  uint16_t port() const { return port_; }
  uint64_t bytes() const { return bytes_.load(); }
  double cpu_seconds() const { return cpu_micros_.load() / 1e6; }
  void Stop();

 private:
  void AcceptLoop();
  void Serve(int fd);

  int listen_fd_ = -1;
  uint16_t port_ = 0;
  std::atomic<bool> stopping_{false};
  std::atomic<uint64_t> bytes_{0};
  std::atomic<uint64_t> cpu_micros_{0};
  std::thread acceptor_;
  std::vector<std::thread> connections_;  // acceptor thread only, joined by Stop
};

// The UDP baseline: one thread, recv() into 64 KiB and discard, on a socket with the same
// receive buffer the daemon asks for (forced past rmem_max when allowed, as the daemon does).
class PlainUdpReceiver {
 public:
  explicit PlainUdpReceiver(int receive_buffer_bytes);
  ~PlainUdpReceiver();
  Status Start();
  uint16_t port() const { return port_; }
  uint64_t datagrams() const { return datagrams_.load(); }
  int granted_buffer_bytes() const { return granted_; }
  void Stop();

 private:
  void Loop();

  const int asked_;
  int granted_ = 0;
  int fd_ = -1;
  uint16_t port_ = 0;
  std::atomic<bool> stopping_{false};
  std::atomic<uint64_t> datagrams_{0};
  std::thread thread_;
};

template <class F>
void Capture::ForEachRecord(const Slice& slice, F&& record) const {
  const uint64_t size = text_.size();
  uint64_t pos = slice.start;
  uint64_t left = slice.bytes;
  while (left > 0) {
    const uint64_t run = std::min(left, size - pos);  // up to the capture's end
    std::string_view part(text_.data() + pos, run);
    while (!part.empty()) {
      const size_t newline = part.find('\n');
      const size_t length = newline == std::string_view::npos ? part.size() : newline + 1;
      record(part.substr(0, length));
      part.remove_prefix(length);
    }
    left -= run;
    pos = (pos + run) % size;
  }
}

}  // namespace codedrift::bench
