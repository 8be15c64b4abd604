// Test harness for integration tests: starts the real codedriftd on loopback ephemeral ports,
// talks to it over real sockets, and stops it by PID.
#pragma once

#include <chrono>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include <sys/types.h>

namespace codedrift::testing {

// A fresh temporary directory, removed with its contents on destruction.
class TempDir {
 public:
  TempDir();
  ~TempDir();
  const std::string& path() const { return path_; }
  std::string File(const std::string& name) const { return path_ + "/" + name; }
  void Write(const std::string& name, const std::string& content) const;

 private:
  std::string path_;
};

struct HttpReply {
  int status = 0;
  std::string headers;
  std::string body;
};

// One blocking HTTP/1.1 exchange with Connection: close.
HttpReply HttpCall(uint16_t port, const std::string& method, const std::string& target,
                   const std::string& body = "", const std::vector<std::string>& headers = {});

// Sends bytes over a fresh TCP connection to 127.0.0.1:port, then closes (shutdown write and
// wait for the peer to close, so everything sent has been read).
void SendTcp(uint16_t port, const std::string& bytes);
void SendUnix(const std::string& path, const std::string& bytes);
void SendUdp(uint16_t port, const std::vector<std::string>& datagrams);

// Runs a command, returning its exit code and stdout.
struct CommandResult {
  int exit_code = -1;
  std::string out;
};
CommandResult RunCommand(const std::string& command);

// Polls `condition` until it holds or `timeout` passes; returns whether it held.
bool WaitFor(const std::function<bool()>& condition,
             std::chrono::milliseconds timeout = std::chrono::seconds(20));

std::string DaemonPath();
std::string CliPath();

// `count` invented telemetry lines (an orchard soil-probe scenario), each ending in '\n', the
// same for the same seed: "probe=12 moisture=40.3 temp=17 ok".
std::string ProbeLines(uint64_t seed, int count);

// A codedriftd process. Starts with `config_yaml` written to dir/codedrift.yaml.
class DaemonProcess {
 public:
  DaemonProcess(const TempDir& dir, const std::string& config_yaml,
                const std::vector<std::string>& extra_args = {});
  ~DaemonProcess();  // SIGKILL if still running

  // Waits for the ready file; false when the daemon exited or did not become ready.
  bool WaitReady(std::chrono::milliseconds timeout = std::chrono::seconds(20));
  uint16_t http_port() const { return http_port_; }
  uint16_t stream_port(const std::string& stream) const;
  pid_t pid() const { return pid_; }

  // Sends a signal and, for TERM/INT, waits for the exit; returns the exit code (-1: timeout).
  int Stop(int signal_number = 15, std::chrono::milliseconds timeout = std::chrono::seconds(15));
  void Signal(int signal_number) const;
  bool Running();
  std::string Log() const;  // what the daemon wrote to stderr so far

  nlohmann::json ModelJson(const std::string& stream, const std::string& model) const;
  // Value of the first sample in /metrics named `name` whose labels include every one of
  // `labels` (each written `key="value"`), e.g. Metric("codedrift_records_total",
  // {"stream=\"uplink\""}).
  std::optional<double> Metric(const std::string& name,
                               const std::vector<std::string>& labels = {}) const;

 private:
  std::string dir_;
  std::string ready_file_;
  std::string log_file_;
  pid_t pid_ = -1;
  int exit_code_ = -1;
  uint16_t http_port_ = 0;
  nlohmann::json ports_;
};

}  // namespace codedrift::testing
