// The small value types of the daemon config (DESIGN.md section 5) and their text forms:
// durations ("500ms", "5s", "10m", "1h", "1d"), ratios ("5%" or "0.05"), CIDR allow rules,
// listen URLs ("tcp://HOST:PORT", "udp://HOST:PORT", "unix:///PATH"), HOST:PORT pairs and
// plain http:// URLs. Pure parsing, no sockets; error messages carry no file position (the
// config reader adds "file:line:column: key: " in front).
#pragma once

#include <array>
#include <chrono>
#include <cstdint>
#include <span>
#include <string>
#include <string_view>

#include "codedrift/result.h"

namespace codedrift {

// Durations are whole milliseconds.
using ConfigDuration = std::chrono::milliseconds;

// The longest duration the config accepts, so deadlines computed from it never overflow.
inline constexpr ConfigDuration kMaxConfigDuration = std::chrono::hours(24 * 365);

// "<digits><unit>" with unit ms, s, m, h or d; nothing else (no sign, no fraction, no space).
Result<ConfigDuration> ParseDuration(std::string_view text);
// The largest unit that represents `duration` exactly: 1d, 90m, 1500ms, 0s.
std::string FormatDuration(ConfigDuration duration);

// "5%", "2.5%" (a percentage) or "0.05" (a ratio); the result lies in [0, 1].
Result<double> ParseRatio(std::string_view text);

// An address block for allow lists: IPv4 "a.b.c.d/n" or IPv6 "x::y/n"; a bare address means
// /32 or /128. Host bits below the prefix must be zero. Plain value type.
class Cidr {
 public:
  static Result<Cidr> Parse(std::string_view text);
  // Loopback only: 127.0.0.0/8 and ::1/128 (the default allow list).
  static Cidr LoopbackV4();
  static Cidr LoopbackV6();

  // `address` is 4 bytes (IPv4) or 16 bytes (IPv6), network order; other sizes never match.
  // An IPv4-mapped IPv6 address (::ffff:a.b.c.d) matches IPv4 rules, and an IPv4 address
  // matches IPv6 rules as its mapped form.
  bool Contains(std::span<const uint8_t> address) const;

  bool is_v6() const { return v6_; }
  int prefix_length() const { return prefix_length_; }
  // Network address bytes (4 or 16 significant).
  std::span<const uint8_t> network() const { return {network_.data(), v6_ ? 16u : 4u}; }
  std::string ToString() const;  // "127.0.0.0/8", "::1/128"

  bool operator==(const Cidr&) const = default;

 private:
  std::array<uint8_t, 16> network_{};
  int prefix_length_ = 0;
  bool v6_ = false;
};

enum class ListenScheme { kTcp, kUdp, kUnix };

std::string_view ListenSchemeName(ListenScheme scheme);  // "tcp", "udp", "unix"

// Where a stream listens. Plain value type.
struct ListenAddress {
  ListenScheme scheme = ListenScheme::kTcp;
  // tcp/udp: an IPv4 literal, an IPv6 literal (without brackets) or a host name. Empty for unix.
  std::string host;
  uint16_t port = 0;  // tcp/udp; 0 lets the system pick a free port
  std::string path;   // unix: absolute socket path, at most 107 bytes

  // tcp://HOST:PORT, udp://HOST:PORT (IPv6 in brackets: tcp://[::1]:7071), unix:///PATH.
  static Result<ListenAddress> Parse(std::string_view url);
  std::string ToString() const;  // the URL form Parse accepts

  bool operator==(const ListenAddress&) const = default;
};

// A host and port, as in http.listen: "127.0.0.1:7070", "[::1]:7070", "localhost:7070".
struct HostPort {
  std::string host;  // IPv6 without brackets
  uint16_t port = 0;

  static Result<HostPort> Parse(std::string_view text);
  std::string ToString() const;  // brackets an IPv6 host

  bool operator==(const HostPort&) const = default;
};

// A plain-HTTP URL as used by the webhook sink: http://HOST[:PORT][/TARGET].
struct HttpUrl {
  std::string host;  // IPv6 without brackets
  uint16_t port = 80;
  std::string target = "/";  // path and query, always starting with '/'

  static Result<HttpUrl> Parse(std::string_view url);
};

}  // namespace codedrift
