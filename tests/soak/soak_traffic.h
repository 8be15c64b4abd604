// The soak benchmark's senders: connection-oriented senders (TCP or unix socket, lines or
// length-prefixed frames) that send as fast as the daemon reads, so TCP backpressure sets the
// rate, and a paced UDP sender. Each counts exactly what it handed to the kernel, in whole
// records, so the daemon's counters can be compared with it to the byte.
#pragma once

#include <atomic>
#include <cstdint>
#include <string>
#include <thread>
#include <vector>

#include "ingest_load_net.h"

namespace codedrift::soak {

// How a connection-oriented stream delimits records (the daemon's `framing`).
enum class WireFraming { kLines, kU16be, kU32be };

// A run of whole records in one framing, ready to send as one buffer.
struct Chunk {
  std::string wire;      // the bytes on the wire, framing included
  uint64_t records = 0;  // records in `wire`
  uint64_t payload = 0;  // record bytes without length prefixes (lines: newlines included)
};

// The capture's lines cut into chunks of about `chunk_bytes`, in order, covering it once.
// Lines keep their newline; u16be/u32be frames carry the line without it.
std::vector<Chunk> MakeChunks(const bench::Capture& capture, WireFraming framing,
                              size_t chunk_bytes);

// Totals a sender has handed to the kernel, in whole chunks.
struct SentTotals {
  uint64_t bytes = 0;  // wire bytes
  uint64_t records = 0;
  uint64_t payload = 0;
};

// One connection that sends chunks back to back (cycling) from its own thread until Stop().
// Stop() finishes the chunk in flight, half-closes and waits for the daemon to close its side,
// which it does only after reading everything. Thread-safe counters; not copyable.
class FlatOutSender {
 public:
  // `target` is "tcp:PORT" or "unix:PATH"; `first` is the chunk this connection starts at, so
  // parallel connections do not send identical bytes in step.
  FlatOutSender(std::string target, const std::vector<Chunk>& chunks, size_t first);
  ~FlatOutSender();
  FlatOutSender(const FlatOutSender&) = delete;
  FlatOutSender& operator=(const FlatOutSender&) = delete;

  Status Start();  // connects; sending starts at once
  SentTotals totals() const;
  // Ends the run (see the class comment); returns the error that ended it early, if any.
  std::string Stop();

 private:
  void Loop();

  const std::string target_;
  const std::vector<Chunk>& chunks_;
  size_t next_;
  int fd_ = -1;
  std::atomic<bool> stopping_{false};
  std::atomic<uint64_t> bytes_{0}, records_{0}, payload_{0};
  std::string error_;  // written by the sending thread, read after join
  std::thread thread_;
};

// Datagrams to 127.0.0.1:port at `rate` per second from one thread (sendmmsg batches), until
// Stop(). Counts datagrams the kernel accepted. Thread-safe counters; not copyable.
class PacedUdpSender {
 public:
  PacedUdpSender(uint16_t port, std::vector<std::string> datagrams, double rate);
  ~PacedUdpSender();
  PacedUdpSender(const PacedUdpSender&) = delete;
  PacedUdpSender& operator=(const PacedUdpSender&) = delete;

  Status Start();
  SentTotals totals() const;
  void Stop();

 private:
  void Loop();

  const uint16_t port_;
  const std::vector<std::string> datagrams_;
  const double rate_;
  int fd_ = -1;
  std::atomic<bool> stopping_{false};
  std::atomic<uint64_t> sent_{0}, bytes_{0};
  std::thread thread_;
};

// The kernel's drop counter of the UDP socket bound to 127.0.0.1:port (/proc/net/udp, last
// column): datagrams that reached the host but not the receiver's queue. -1 when not found.
int64_t UdpSocketDrops(uint16_t port);

}  // namespace codedrift::soak
