// Parsing `replay --to` addresses: tcp://HOST:PORT or udp://HOST:PORT (IPv6 hosts in
// brackets). Kept free of Asio so it stays cheap to compile and test.
#pragma once

#include <string>

#include "codedrift/result.h"

namespace codedrift::cli {

struct ReplayTarget {
  bool udp = false;
  std::string host;  // without brackets
  std::string port;  // decimal, 1..65535
  std::string ToString() const;
};

Result<ReplayTarget> ParseReplayTarget(const std::string& text);

}  // namespace codedrift::cli
