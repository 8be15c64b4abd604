// Addresses of the daemon config: CIDR allow rules, listen URLs, HOST:PORT, http:// URLs.
#include <algorithm>
#include <charconv>
#include <cstring>

#include "codedrift/config_values.h"

#include "daemon_config_text.h"
#include <arpa/inet.h>

namespace codedrift {
namespace {

constexpr std::string_view kCidrForm =
    "expected an IPv4 or IPv6 address with an optional /prefix, e.g. 10.0.0.0/8 or fd00::/8";
constexpr std::string_view kListenForm =
    "expected tcp://HOST:PORT, udp://HOST:PORT or unix:///PATH";
constexpr std::string_view kHostPortForm = "expected HOST:PORT, e.g. 127.0.0.1:7070 or [::1]:7070";
constexpr std::string_view kHttpUrlForm = "expected http://HOST[:PORT][/PATH]";
constexpr size_t kMaxUnixPath = 107;  // sun_path holds 108 bytes with the terminating NUL

bool AllDigits(std::string_view text) {
  return !text.empty() &&
         std::all_of(text.begin(), text.end(), [](char c) { return c >= '0' && c <= '9'; });
}

// inet_pton wants a NUL-terminated string; returns false for anything it rejects.
bool ParseIp(std::string_view text, bool v6, uint8_t* out) {
  if (text.empty() || text.size() > 64 || text.find('\0') != std::string_view::npos) return false;
  const std::string copy(text);
  return inet_pton(v6 ? AF_INET6 : AF_INET, copy.c_str(), out) == 1;
}

std::string FormatIp(const uint8_t* bytes, bool v6) {
  char text[INET6_ADDRSTRLEN] = {};
  inet_ntop(v6 ? AF_INET6 : AF_INET, bytes, text, sizeof text);
  return text;
}

bool IsHostNameChar(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '-' ||
         c == '.';
}

// Why `host` is not a usable host (an IPv4 literal or a DNS name), or empty when it is.
std::string HostProblem(std::string_view host) {
  if (host.empty()) return "the host is empty";
  if (host.find(':') != std::string_view::npos) {
    return "an IPv6 address needs brackets, as in [::1]";
  }
  const bool numeric = std::all_of(host.begin(), host.end(),
                                   [](char c) { return (c >= '0' && c <= '9') || c == '.'; });
  uint8_t bytes[4];
  if (numeric)
    return ParseIp(host, false, bytes) ? "" : QuoteForMessage(host) + " is no IPv4 address";
  if (host.size() > 253 || !std::all_of(host.begin(), host.end(), IsHostNameChar) ||
      host.front() == '.' || host.front() == '-' || host.find("..") != std::string_view::npos) {
    return QuoteForMessage(host) + " is no host name";
  }
  return "";
}

// Parses "HOST:PORT" or "[V6]:PORT" (port required when `default_port` < 0).
std::string ParseAuthority(std::string_view text, int default_port, std::string& host,
                           uint16_t& port) {
  std::string_view port_text;
  bool has_port = false;
  if (text.starts_with('[')) {
    const size_t close = text.find(']');
    if (close == std::string_view::npos) return "the '[' has no matching ']'";
    host = std::string(text.substr(1, close - 1));
    uint8_t bytes[16];
    if (!ParseIp(host, true, bytes)) return QuoteForMessage(host) + " is no IPv6 address";
    const std::string_view after = text.substr(close + 1);
    if (!after.empty()) {
      if (after.front() != ':') return "unexpected text after ']'";
      port_text = after.substr(1);
      has_port = true;
    }
  } else {
    const size_t colon = text.rfind(':');
    if (colon != std::string_view::npos &&
        text.substr(0, colon).find(':') == std::string_view::npos) {
      port_text = text.substr(colon + 1);
      has_port = true;
      text = text.substr(0, colon);
    }
    if (std::string problem = HostProblem(text); !problem.empty()) return problem;
    host = std::string(text);
  }
  if (!has_port) {
    if (default_port < 0) return "the port is missing";
    port = static_cast<uint16_t>(default_port);
    return "";
  }
  unsigned value = 0;
  const auto [end, ec] =
      std::from_chars(port_text.data(), port_text.data() + port_text.size(), value);
  if (!AllDigits(port_text) || ec != std::errc() || end != port_text.data() + port_text.size() ||
      value > 65535) {
    return "port " + QuoteForMessage(port_text) + " is not a number from 0 to 65535";
  }
  port = static_cast<uint16_t>(value);
  return "";
}

std::string BracketHost(const std::string& host) {
  return host.find(':') == std::string::npos ? host : "[" + host + "]";
}

bool PrefixMatches(const uint8_t* a, const uint8_t* b, int bits) {
  const int whole = bits / 8;
  if (std::memcmp(a, b, whole) != 0) return false;
  const int rest = bits % 8;
  if (rest == 0) return true;
  const auto mask = static_cast<uint8_t>(0xff << (8 - rest));
  return (a[whole] & mask) == (b[whole] & mask);
}

constexpr uint8_t kV4MappedPrefix[12] = {0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0xff, 0xff};

}  // namespace

Result<Cidr> Cidr::Parse(std::string_view text) {
  const size_t slash = text.find('/');
  const std::string_view address = text.substr(0, slash);
  Cidr cidr;
  cidr.v6_ = address.find(':') != std::string_view::npos;
  if (!ParseIp(address, cidr.v6_, cidr.network_.data())) {
    return Error{"bad CIDR " + QuoteForMessage(text) + ", " + std::string(kCidrForm)};
  }
  const int max_prefix = cidr.v6_ ? 128 : 32;
  cidr.prefix_length_ = max_prefix;
  if (slash != std::string_view::npos) {
    const std::string_view prefix = text.substr(slash + 1);
    int value = -1;
    if (AllDigits(prefix) && prefix.size() <= 3) {
      std::from_chars(prefix.data(), prefix.data() + prefix.size(), value);
    }
    if (value < 0 || value > max_prefix) {
      return Error{"bad CIDR " + QuoteForMessage(text) + ": prefix length " +
                   QuoteForMessage(prefix) + " is out of range, expected 0.." +
                   std::to_string(max_prefix)};
    }
    cidr.prefix_length_ = value;
  }
  Cidr masked = cidr;
  const int bytes = cidr.v6_ ? 16 : 4;
  for (int bit = cidr.prefix_length_; bit < bytes * 8; ++bit) {
    masked.network_[bit / 8] &= static_cast<uint8_t>(~(0x80 >> (bit % 8)));
  }
  if (masked.network_ != cidr.network_) {
    return Error{"bad CIDR " + QuoteForMessage(text) + ": bits are set below the /" +
                 std::to_string(cidr.prefix_length_) + " prefix, expected " + masked.ToString()};
  }
  return cidr;
}

Cidr Cidr::LoopbackV4() { return Parse("127.0.0.0/8").value(); }
Cidr Cidr::LoopbackV6() { return Parse("::1/128").value(); }

bool Cidr::Contains(std::span<const uint8_t> address) const {
  uint8_t candidate[16];
  if (!v6_) {
    if (address.size() == 4) return PrefixMatches(address.data(), network_.data(), prefix_length_);
    if (address.size() == 16 && std::memcmp(address.data(), kV4MappedPrefix, 12) == 0) {
      return PrefixMatches(address.data() + 12, network_.data(), prefix_length_);
    }
    return false;
  }
  if (address.size() == 16) return PrefixMatches(address.data(), network_.data(), prefix_length_);
  if (address.size() != 4) return false;
  std::memcpy(candidate, kV4MappedPrefix, 12);
  std::memcpy(candidate + 12, address.data(), 4);
  return PrefixMatches(candidate, network_.data(), prefix_length_);
}

std::string Cidr::ToString() const {
  return FormatIp(network_.data(), v6_) + "/" + std::to_string(prefix_length_);
}

std::string_view ListenSchemeName(ListenScheme scheme) {
  switch (scheme) {
    case ListenScheme::kTcp:
      return "tcp";
    case ListenScheme::kUdp:
      return "udp";
    case ListenScheme::kUnix:
      return "unix";
  }
  return "?";
}

Result<ListenAddress> ListenAddress::Parse(std::string_view url) {
  const auto fail = [&](std::string_view problem) {
    return Error{"bad listen URL " + QuoteForMessage(url) + ": " + std::string(problem) + ", " +
                 std::string(kListenForm)};
  };
  const size_t separator = url.find("://");
  if (separator == std::string_view::npos) return fail("it has no scheme");
  const std::string_view scheme = url.substr(0, separator);
  const std::string_view rest = url.substr(separator + 3);
  ListenAddress address;
  if (scheme == "unix") {
    address.scheme = ListenScheme::kUnix;
    if (!rest.starts_with('/')) return fail("the socket path must be absolute");
    if (rest.size() > kMaxUnixPath) return fail("the socket path is longer than 107 bytes");
    if (rest.find('\0') != std::string_view::npos) return fail("the socket path holds a NUL");
    address.path = std::string(rest);
    return address;
  }
  if (scheme == "tcp") {
    address.scheme = ListenScheme::kTcp;
  } else if (scheme == "udp") {
    address.scheme = ListenScheme::kUdp;
  } else {
    return fail("unknown scheme " + QuoteForMessage(scheme));
  }
  if (std::string problem = ParseAuthority(rest, -1, address.host, address.port);
      !problem.empty()) {
    return fail(problem);
  }
  return address;
}

std::string ListenAddress::ToString() const {
  if (scheme == ListenScheme::kUnix) return "unix://" + path;
  return std::string(ListenSchemeName(scheme)) + "://" + BracketHost(host) + ":" +
         std::to_string(port);
}

Result<HostPort> HostPort::Parse(std::string_view text) {
  HostPort result;
  if (std::string problem = ParseAuthority(text, -1, result.host, result.port); !problem.empty()) {
    return Error{"bad address " + QuoteForMessage(text) + ": " + problem + ", " +
                 std::string(kHostPortForm)};
  }
  return result;
}

std::string HostPort::ToString() const { return BracketHost(host) + ":" + std::to_string(port); }

Result<HttpUrl> HttpUrl::Parse(std::string_view url) {
  const auto fail = [&](std::string_view problem) {
    return Error{"bad URL " + QuoteForMessage(url) + ": " + std::string(problem) + ", " +
                 std::string(kHttpUrlForm)};
  };
  constexpr std::string_view kScheme = "http://";
  if (url.starts_with("https://")) return fail("https is not supported");
  if (!url.starts_with(kScheme)) return fail("it does not start with http://");
  const std::string_view rest = url.substr(kScheme.size());
  const size_t target_start = std::min(rest.find('/'), rest.find('?'));
  const std::string_view authority = rest.substr(0, target_start);
  if (authority.find('@') != std::string_view::npos) return fail("user names are not supported");
  HttpUrl result;
  if (std::string problem = ParseAuthority(authority, 80, result.host, result.port);
      !problem.empty()) {
    return fail(problem);
  }
  if (target_start != std::string_view::npos) {
    const std::string_view target = rest.substr(target_start);
    for (char c : target) {
      if (static_cast<unsigned char>(c) <= 0x20 || c == 0x7f) {
        return fail("the path holds spaces or control characters");
      }
    }
    result.target = target.starts_with('/') ? std::string(target) : "/" + std::string(target);
  }
  return result;
}

}  // namespace codedrift
