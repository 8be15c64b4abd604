// Config texts shared by the daemon config tests. Positions in the comments are 1-based.
#pragma once

#include <string>
#include <string_view>

#include <gtest/gtest.h>

#include "codedrift/daemon_config.h"

namespace codedrift::config_test {

// Lines 1-6. Stream keys appended after it start at line 7, column 5; model keys at line 7,
// column 9; top-level keys at line 7, column 1.
constexpr std::string_view kOneStream = R"(streams:
  - name: up
    listen: tcp://127.0.0.1:7071
    models:
      - name: m
        symbols: {kind: bytes}
)";

// kOneStream without its symbols line (line 6 is free).
constexpr std::string_view kStreamHead = R"(streams:
  - name: up
    listen: tcp://127.0.0.1:7071
    models:
      - name: m
)";

inline std::string With(std::string_view head, std::string_view tail) {
  return std::string(head) + std::string(tail);
}

// The listen URL's value sits at line 3, column 13.
inline std::string StreamListening(std::string_view url) {
  return "streams:\n  - name: up\n    listen: " + std::string(url) +
         "\n    models:\n      - name: m\n        symbols: {kind: bytes}\n";
}

inline std::string ErrorOf(std::string_view text, std::string_view file_name = "demo.yaml") {
  Result<DaemonConfig> config = ParseDaemonConfig(text, file_name);
  return config.ok() ? "(no error)" : config.error().message;
}

inline DaemonConfig ParseOk(std::string_view text, std::string_view file_name = "demo.yaml") {
  Result<DaemonConfig> config = ParseDaemonConfig(text, file_name);
  EXPECT_TRUE(config.ok()) << config.error().message;
  return config.ok() ? config.value() : DaemonConfig{};
}

}  // namespace codedrift::config_test
