// RecordingProxy: a loopback HTTP forwarder in front of the daemon that keeps every exchange,
// so a browser test can compare what the page shows with the exact documents the daemon's API
// served to it (the daemon keeps evaluating while the browser loads, so a later API call would
// see newer figures). One request per connection (answers carry Connection: close). Accepts on
// its own thread and serves each connection on another; Exchanges() may be called from any
// thread. Header-only (see child_process.h).
#pragma once

#include <atomic>
#include <cctype>
#include <cstdint>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include "harness.h"
#include <arpa/inet.h>
#include <netinet/in.h>
#include <sys/socket.h>
#include <unistd.h>

namespace codedrift::testing {

struct HttpExchange {
  std::string target;  // request target as the browser sent it, e.g. /api/v1/models
  int status = 0;
  std::string body;
};

class RecordingProxy {
 public:
  explicit RecordingProxy(uint16_t upstream_port) : upstream_port_(upstream_port) {
    listen_fd_ = ::socket(AF_INET, SOCK_STREAM, 0);
    sockaddr_in addr{};
    addr.sin_family = AF_INET;
    addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
    if (::bind(listen_fd_, reinterpret_cast<sockaddr*>(&addr), sizeof addr) != 0 ||
        ::listen(listen_fd_, 64) != 0) {
      return;
    }
    socklen_t length = sizeof addr;
    ::getsockname(listen_fd_, reinterpret_cast<sockaddr*>(&addr), &length);
    port_ = ntohs(addr.sin_port);
    acceptor_ = std::thread([this] { AcceptLoop(); });
  }
  RecordingProxy(const RecordingProxy&) = delete;
  RecordingProxy& operator=(const RecordingProxy&) = delete;

  ~RecordingProxy() {
    stopping_ = true;
    ::shutdown(listen_fd_, SHUT_RDWR);  // wakes accept()
    if (acceptor_.joinable()) acceptor_.join();
    ::close(listen_fd_);
    {
      std::lock_guard lock(mutex_);
      for (int fd : open_) ::shutdown(fd, SHUT_RDWR);  // wakes idle (preconnected) sockets
    }
    for (auto& worker : workers_) worker.join();
  }

  uint16_t port() const { return port_; }

  std::vector<HttpExchange> Exchanges() const {
    std::lock_guard lock(mutex_);
    return exchanges_;
  }

 private:
  void AcceptLoop() {
    while (!stopping_) {
      const int fd = ::accept(listen_fd_, nullptr, nullptr);
      if (fd < 0) {
        if (stopping_) return;
        continue;
      }
      std::lock_guard lock(mutex_);
      open_.push_back(fd);
      workers_.emplace_back([this, fd] { Serve(fd); });
    }
  }

  void Serve(int fd) {
    std::string request;
    char buffer[4096];
    while (request.find("\r\n\r\n") == std::string::npos) {
      const ssize_t n = ::recv(fd, buffer, sizeof buffer, 0);
      if (n <= 0) break;
      request.append(buffer, static_cast<size_t>(n));
    }
    const size_t method_end = request.find(' ');
    const size_t target_end =
        method_end == std::string::npos ? method_end : request.find(' ', method_end + 1);
    if (target_end != std::string::npos) {
      const std::string method = request.substr(0, method_end);
      const std::string target = request.substr(method_end + 1, target_end - method_end - 1);
      const HttpReply reply = HttpCall(upstream_port_, method, target);
      {
        std::lock_guard lock(mutex_);
        exchanges_.push_back({target, reply.status, reply.body});
      }
      std::string answer = "HTTP/1.1 " + std::to_string(reply.status) + " Forwarded\r\n";
      const std::string type = HeaderValue(reply.headers, "content-type");
      if (!type.empty()) answer += "Content-Type: " + type + "\r\n";
      answer += "Content-Length: " + std::to_string(reply.body.size()) +
                "\r\nCache-Control: no-store\r\nConnection: close\r\n\r\n" + reply.body;
      size_t done = 0;
      while (done < answer.size()) {
        const ssize_t n = ::send(fd, answer.data() + done, answer.size() - done, MSG_NOSIGNAL);
        if (n <= 0) break;
        done += static_cast<size_t>(n);
      }
    }
    ::shutdown(fd, SHUT_WR);
    while (::recv(fd, buffer, sizeof buffer, 0) > 0) {
    }
    std::lock_guard lock(mutex_);
    std::erase(open_, fd);
    ::close(fd);
  }

  static std::string HeaderValue(const std::string& headers, const std::string& lower_name) {
    std::string lowered = headers;
    for (char& c : lowered) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    const size_t at = lowered.find("\r\n" + lower_name + ":");
    if (at == std::string::npos) return "";
    size_t begin = at + 3 + lower_name.size();
    while (begin < headers.size() && headers[begin] == ' ') ++begin;
    const size_t end = headers.find("\r\n", begin);
    return headers.substr(begin, end == std::string::npos ? end : end - begin);
  }

  const uint16_t upstream_port_;
  int listen_fd_ = -1;
  uint16_t port_ = 0;
  std::atomic<bool> stopping_ = false;
  std::thread acceptor_;
  mutable std::mutex mutex_;  // guards everything below
  std::vector<std::thread> workers_;
  std::vector<int> open_;
  std::vector<HttpExchange> exchanges_;
};

}  // namespace codedrift::testing
