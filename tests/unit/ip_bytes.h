// Shared by the config tests: address bytes as the kernel hands them over, parsed by glibc's
// inet_pton rather than by our own parser, so allow-list checks have an outside oracle.
#pragma once

#include <cstdint>
#include <vector>

#include <gtest/gtest.h>

#include <arpa/inet.h>

namespace codedrift {

// 4 bytes for an IPv4 address, 16 for IPv6; a text neither parses fails the calling test.
inline std::vector<uint8_t> Ip(const char* text) {
  std::vector<uint8_t> bytes(16);
  if (inet_pton(AF_INET, text, bytes.data()) == 1) {
    bytes.resize(4);
  } else {
    EXPECT_EQ(inet_pton(AF_INET6, text, bytes.data()), 1) << text;
  }
  return bytes;
}

}  // namespace codedrift
