// PrometheusServer: the real Prometheus (Debian `prometheus`) started by a test on a free
// loopback port with a temporary storage dir, queried over its HTTP API, stopped by PID.
// Header-only because the integration-test build compiles only *_test.cc and the harness.
// One instance per server, used from one thread.
#pragma once

#include <cctype>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "harness.h"
#include <arpa/inet.h>
#include <fcntl.h>
#include <netinet/in.h>
#include <signal.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <unistd.h>

namespace codedrift::testing {

// The body of an HTTP/1.1 reply: Go's server sends larger answers with chunked transfer
// coding, which the harness's HttpCall leaves as it came.
inline std::string ReplyBody(const HttpReply& reply) {
  std::string headers = reply.headers;
  for (char& c : headers) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  if (headers.find("transfer-encoding: chunked") == std::string::npos) return reply.body;
  std::string body;
  size_t at = 0;
  while (at < reply.body.size()) {
    const size_t line_end = reply.body.find("\r\n", at);
    if (line_end == std::string::npos) break;
    const size_t size = std::strtoul(reply.body.substr(at, line_end - at).c_str(), nullptr, 16);
    if (size == 0) break;
    body.append(reply.body, line_end + 2, size);
    at = line_end + 2 + size + 2;
  }
  return body;
}

// A loopback TCP port nobody listens on right now: bind port 0, read what the kernel gave,
// close. Another process could take it before the caller binds it; on a test host that race
// is rare and shows up as a startup failure, not a wrong result.
inline uint16_t FreeLoopbackPort() {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in addr{};
  addr.sin_family = AF_INET;
  addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  addr.sin_port = 0;
  socklen_t length = sizeof addr;
  uint16_t port = 0;
  if (::bind(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr) == 0 &&
      ::getsockname(fd, reinterpret_cast<sockaddr*>(&addr), &length) == 0) {
    port = ntohs(addr.sin_port);
  }
  ::close(fd);
  return port;
}

// Percent-encodes everything but RFC 3986 unreserved characters (for query strings).
inline std::string UrlEncode(const std::string& text) {
  std::string out;
  for (const unsigned char c : text) {
    if (std::isalnum(c) || c == '-' || c == '_' || c == '.' || c == '~') {
      out += static_cast<char>(c);
    } else {
      char hex[4];
      std::snprintf(hex, sizeof hex, "%%%02X", c);
      out += hex;
    }
  }
  return out;
}

class PrometheusServer {
 public:
  // Writes `config_yaml` to dir/prometheus.yml and starts the server with its storage in
  // dir/tsdb.
  PrometheusServer(const TempDir& dir, const std::string& config_yaml)
      : port_(FreeLoopbackPort()), log_file_(dir.File("prometheus.log")) {
    dir.Write("prometheus.yml", config_yaml);
    std::vector<std::string> args = {"prometheus", "--config.file=" + dir.File("prometheus.yml"),
                                     "--storage.tsdb.path=" + dir.File("tsdb"),
                                     "--web.listen-address=127.0.0.1:" + std::to_string(port_),
                                     "--log.level=warn"};
    pid_ = ::fork();
    if (pid_ == 0) {
      const int log = ::open(log_file_.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
      const int in = ::open("/dev/null", O_RDONLY);
      ::dup2(in, 0);
      ::dup2(log, 1);
      ::dup2(log, 2);
      std::vector<char*> argv;
      for (auto& a : args) argv.push_back(a.data());
      argv.push_back(nullptr);
      ::execvp(argv[0], argv.data());
      std::_Exit(127);
    }
  }

  ~PrometheusServer() {
    if (Running()) {
      ::kill(pid_, SIGKILL);
      ::waitpid(pid_, nullptr, 0);
    }
  }
  PrometheusServer(const PrometheusServer&) = delete;
  PrometheusServer& operator=(const PrometheusServer&) = delete;

  uint16_t port() const { return port_; }

  bool Running() {
    if (pid_ <= 0 || exited_) return false;
    int status = 0;
    if (::waitpid(pid_, &status, WNOHANG) == pid_) {
      exited_ = true;
      exit_code_ = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
      return false;
    }
    return true;
  }

  // Waits for GET /-/ready to answer 200 (TSDB open, rules loaded).
  bool WaitReady(std::chrono::milliseconds timeout = std::chrono::seconds(60)) {
    return WaitFor([&] { return !Running() || HttpCall(port_, "GET", "/-/ready").status == 200; },
                   timeout) &&
           Running();
  }

  // SIGTERM, then waits for the exit; returns the exit code (-1 when it did not exit in time).
  int Stop(std::chrono::milliseconds timeout = std::chrono::seconds(30)) {
    if (!Running()) return exit_code_;
    ::kill(pid_, SIGTERM);
    if (!WaitFor([&] { return !Running(); }, timeout)) return -1;
    return exit_code_;
  }

  std::string Log() const {
    std::ifstream in(log_file_);
    std::ostringstream text;
    text << in.rdbuf();
    return text.str();
  }

  // GET path (a query string already encoded); the parsed JSON body, or null on any failure.
  nlohmann::json Get(const std::string& target) const {
    const HttpReply reply = HttpCall(port_, "GET", target);
    if (reply.status != 200) return nullptr;
    return nlohmann::json::parse(ReplyBody(reply), nullptr, false);
  }

  // The `result` array of an instant query (empty on an error or no data).
  nlohmann::json Query(const std::string& promql) const {
    const nlohmann::json body = Get("/api/v1/query?query=" + UrlEncode(promql));
    if (!body.is_object() || body.value("status", "") != "success") {
      return nlohmann::json::array();
    }
    return body["data"]["result"];
  }

  // The error text of a query Prometheus rejects, empty when it is accepted.
  std::string QueryError(const std::string& promql) const {
    const HttpReply reply = HttpCall(port_, "GET", "/api/v1/query?query=" + UrlEncode(promql));
    const nlohmann::json body = nlohmann::json::parse(ReplyBody(reply), nullptr, false);
    if (reply.status == 200 && body.is_object() && body.value("status", "") == "success") {
      return "";
    }
    return body.is_object() ? body.value("error", reply.body) : reply.body;
  }

  // The value of the only sample of an instant query, or NaN when there is not exactly one.
  double Scalar(const std::string& promql) const {
    const nlohmann::json result = Query(promql);
    if (!result.is_array() || result.size() != 1) return std::nan("");
    return std::strtod(result[0]["value"][1].get<std::string>().c_str(), nullptr);
  }

 private:
  uint16_t port_ = 0;
  std::string log_file_;
  pid_t pid_ = -1;
  bool exited_ = false;
  int exit_code_ = -1;
};

}  // namespace codedrift::testing
