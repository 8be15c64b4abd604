#include "replay_target.h"

#include <charconv>

namespace codedrift::cli {

std::string ReplayTarget::ToString() const {
  const bool v6 = host.find(':') != std::string::npos;
  return std::string(udp ? "udp" : "tcp") + "://" + (v6 ? "[" + host + "]" : host) + ":" + port;
}

Result<ReplayTarget> ParseReplayTarget(const std::string& text) {
  const Error bad{"--to '" + text + "': expected tcp://HOST:PORT or udp://HOST:PORT"};
  ReplayTarget target;
  std::string rest;
  if (text.starts_with("tcp://")) {
    rest = text.substr(6);
  } else if (text.starts_with("udp://")) {
    target.udp = true;
    rest = text.substr(6);
  } else {
    return bad;
  }
  size_t colon = std::string::npos;
  if (rest.starts_with("[")) {
    const size_t close = rest.find(']');
    if (close == std::string::npos || close + 1 >= rest.size() || rest[close + 1] != ':') {
      return bad;
    }
    target.host = rest.substr(1, close - 1);
    colon = close + 1;
  } else {
    colon = rest.rfind(':');
    if (colon == std::string::npos) return bad;
    target.host = rest.substr(0, colon);
    if (target.host.find(':') != std::string::npos) return bad;  // IPv6 needs brackets
  }
  target.port = rest.substr(colon + 1);
  unsigned port = 0;
  const char* begin = target.port.data();
  const char* end = begin + target.port.size();
  const auto [parsed_end, ec] = std::from_chars(begin, end, port);
  if (target.host.empty() || ec != std::errc() || parsed_end != end || port == 0 || port > 65535) {
    return bad;
  }
  return target;
}

}  // namespace codedrift::cli
