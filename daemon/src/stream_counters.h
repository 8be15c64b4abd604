// StreamCounters: the per-stream ingest counters the listeners write and the metrics exporter
// reads (codedrift_records_total, codedrift_connections, ... in DESIGN.md §5).
#pragma once

#include <array>
#include <atomic>
#include <cstddef>
#include <cstdint>
#include <string_view>

namespace codedrift {

// Why a record was not delivered (or delivered cut short), label `reason` of
// codedrift_records_rejected_total.
enum class RecordRejectReason : uint8_t {
  kOverlong,           // a line over max_record_bytes (truncated or dropped per `overlong`)
  kOversizedFrame,     // a u16be/u32be length over max_record_bytes; the connection is closed
  kTruncatedFrame,     // the connection ended inside a length prefix or frame body
  kOversizedDatagram,  // a UDP datagram over max_record_bytes (dropped)
  kNotAllowed,         // a UDP datagram from a peer outside `allow` (dropped)
};
inline constexpr size_t kRecordRejectReasonCount = 5;

// Why a connection was refused, label `reason` of codedrift_connections_rejected_total.
enum class ConnectionRejectReason : uint8_t {
  kNotAllowed,  // peer outside `allow`: closed before a byte is read
  kTooMany,     // max_connections already open: closed at once
};
inline constexpr size_t kConnectionRejectReasonCount = 2;

// Why an accepted connection ended, label `reason` of codedrift_connections_closed_total
// (our addition to DESIGN.md §5: idle timeouts are closures, not refusals).
enum class ConnectionCloseReason : uint8_t {
  kPeer,         // the peer closed (EOF) or reset the connection
  kIdle,         // no byte for idle_timeout
  kFramingLost,  // an oversized length prefix: the stream cannot be re-synchronised
  kStopped,      // the daemon stopped or reloaded the stream
};
inline constexpr size_t kConnectionCloseReasonCount = 4;

// The metric label of each reason.
constexpr std::string_view ReasonLabel(RecordRejectReason reason) {
  switch (reason) {
    case RecordRejectReason::kOverlong:
      return "overlong";
    case RecordRejectReason::kOversizedFrame:
      return "oversized_frame";
    case RecordRejectReason::kTruncatedFrame:
      return "truncated_frame";
    case RecordRejectReason::kOversizedDatagram:
      return "oversized_datagram";
    case RecordRejectReason::kNotAllowed:
      return "not_allowed";
  }
  return "unknown";
}
constexpr std::string_view ReasonLabel(ConnectionRejectReason reason) {
  switch (reason) {
    case ConnectionRejectReason::kNotAllowed:
      return "not_allowed";
    case ConnectionRejectReason::kTooMany:
      return "too_many";
  }
  return "unknown";
}
constexpr std::string_view ReasonLabel(ConnectionCloseReason reason) {
  switch (reason) {
    case ConnectionCloseReason::kPeer:
      return "peer";
    case ConnectionCloseReason::kIdle:
      return "idle";
    case ConnectionCloseReason::kFramingLost:
      return "framing_lost";
    case ConnectionCloseReason::kStopped:
      return "stopped";
  }
  return "unknown";
}

// Counters of one stream. Lock-free: listeners add from any io thread with relaxed atomics, the
// exporter reads at scrape time. Owned by the integrator (shared_ptr) so counts survive a
// listener being rebuilt on reload. Counters only grow; `connections` is a gauge.
struct StreamCounters {
  std::atomic<uint64_t> records_total{0};  // records handed to the stream handler
  std::atomic<uint64_t> bytes_total{0};    // bytes read from sockets (framing bytes included)
  std::array<std::atomic<uint64_t>, kRecordRejectReasonCount> records_rejected{};
  std::atomic<int64_t> connections{0};  // open stream connections now
  std::array<std::atomic<uint64_t>, kConnectionRejectReasonCount> connections_rejected{};
  std::array<std::atomic<uint64_t>, kConnectionCloseReasonCount> connections_closed{};

  void Add(RecordRejectReason r, uint64_t n = 1) {
    records_rejected[static_cast<size_t>(r)].fetch_add(n, std::memory_order_relaxed);
  }
  void Add(ConnectionRejectReason r) {
    connections_rejected[static_cast<size_t>(r)].fetch_add(1, std::memory_order_relaxed);
  }
  void Add(ConnectionCloseReason r) {
    connections_closed[static_cast<size_t>(r)].fetch_add(1, std::memory_order_relaxed);
  }
  uint64_t Get(RecordRejectReason r) const {
    return records_rejected[static_cast<size_t>(r)].load(std::memory_order_relaxed);
  }
  uint64_t Get(ConnectionRejectReason r) const {
    return connections_rejected[static_cast<size_t>(r)].load(std::memory_order_relaxed);
  }
  uint64_t Get(ConnectionCloseReason r) const {
    return connections_closed[static_cast<size_t>(r)].load(std::memory_order_relaxed);
  }
};

}  // namespace codedrift
