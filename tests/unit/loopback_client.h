// Loopback test clients over plain POSIX sockets: TCP (IPv4/IPv6), unix stream, UDP, and the
// length-prefix encodings. Waits have deadlines; nothing sleeps.
#pragma once

#include <cerrno>
#include <chrono>
#include <cstring>
#include <string>
#include <string_view>
#include <utility>

#include <gtest/gtest.h>

#include <arpa/inet.h>
#include <netinet/in.h>
#include <poll.h>
#include <sys/socket.h>
#include <sys/un.h>
#include <unistd.h>

namespace codedrift {

inline constexpr std::chrono::seconds kClientTimeout{10};

// A connected client socket, closed on destruction.
class Client {
 public:
  explicit Client(int fd) : fd_(fd) {}
  Client(Client&& other) noexcept : fd_(std::exchange(other.fd_, -1)) {}
  ~Client() {
    if (fd_ >= 0) ::close(fd_);
  }
  int fd() const { return fd_; }
  bool ok() const { return fd_ >= 0; }

  void Send(std::string_view bytes) {
    while (!bytes.empty()) {
      const ssize_t n = ::send(fd_, bytes.data(), bytes.size(), MSG_NOSIGNAL);
      ASSERT_GT(n, 0) << std::strerror(errno);
      bytes.remove_prefix(static_cast<size_t>(n));
    }
  }
  // For peers the server may refuse: the send may fail once it has closed.
  void TrySend(std::string_view bytes) {
    (void)::send(fd_, bytes.data(), bytes.size(), MSG_NOSIGNAL);
  }
  // Half-close: the server reads end of stream but may still answer (by closing).
  void ShutdownWrite() { ::shutdown(fd_, SHUT_WR); }
  void Close() {
    ::close(fd_);
    fd_ = -1;
  }
  // True when the server closes the connection (end of stream or reset) within the timeout,
  // with no byte sent our way.
  bool ServerCloses() {
    pollfd p{fd_, POLLIN, 0};
    if (::poll(&p, 1, static_cast<int>(std::chrono::milliseconds(kClientTimeout).count())) != 1)
      return false;
    char byte;
    const ssize_t n = ::recv(fd_, &byte, 1, 0);
    return n == 0 || (n < 0 && errno == ECONNRESET);
  }

 private:
  int fd_;
};

inline Client ConnectTcp(uint16_t port, bool v6 = false) {
  const int fd = ::socket(v6 ? AF_INET6 : AF_INET, SOCK_STREAM, 0);
  int rc;
  if (v6) {
    sockaddr_in6 addr{};
    addr.sin6_family = AF_INET6;
    addr.sin6_port = htons(port);
    addr.sin6_addr = in6addr_loopback;
    rc = ::connect(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr);
  } else {
    sockaddr_in addr{};
    addr.sin_family = AF_INET;
    addr.sin_port = htons(port);
    addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
    rc = ::connect(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr);
  }
  EXPECT_EQ(rc, 0) << std::strerror(errno);
  return Client(fd);
}

inline Client ConnectUnix(const std::string& path) {
  const int fd = ::socket(AF_UNIX, SOCK_STREAM, 0);
  sockaddr_un addr{};
  addr.sun_family = AF_UNIX;
  std::strncpy(addr.sun_path, path.c_str(), sizeof addr.sun_path - 1);
  EXPECT_EQ(::connect(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr), 0)
      << std::strerror(errno);
  return Client(fd);
}

inline void SendDatagram(uint16_t port, std::string_view payload) {
  const int fd = ::socket(AF_INET, SOCK_DGRAM, 0);
  sockaddr_in addr{};
  addr.sin_family = AF_INET;
  addr.sin_port = htons(port);
  addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  EXPECT_EQ(::sendto(fd, payload.data(), payload.size(), 0, reinterpret_cast<sockaddr*>(&addr),
                     sizeof addr),
            static_cast<ssize_t>(payload.size()))
      << std::strerror(errno);
  ::close(fd);
}

inline std::string U16Frame(std::string_view body) {
  std::string out;
  out.push_back(static_cast<char>(body.size() >> 8));
  out.push_back(static_cast<char>(body.size() & 0xff));
  return out + std::string(body);
}

inline std::string U32Frame(std::string_view body) {
  std::string out;
  for (int shift = 24; shift >= 0; shift -= 8) {
    out.push_back(static_cast<char>((body.size() >> shift) & 0xff));
  }
  return out + std::string(body);
}

}  // namespace codedrift
