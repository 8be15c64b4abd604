// Loopback clients for the hostile-input tests: every blocking call has a timeout, so a daemon
// that stops answering fails the test instead of hanging it. Header-only (integration tests are
// one .cc each plus the harness).
#pragma once

#include <cerrno>
#include <chrono>
#include <cstdint>
#include <fstream>
#include <string>
#include <string_view>

#include <arpa/inet.h>
#include <netinet/in.h>
#include <sys/socket.h>
#include <sys/time.h>
#include <unistd.h>

namespace codedrift::testing {

// Blocking sends and receives give up after this long (the daemon answers in milliseconds).
inline constexpr std::chrono::seconds kSocketTimeout{10};

// An owned socket descriptor; closes on destruction. Move-only.
class ClientSocket {
 public:
  ClientSocket() = default;
  explicit ClientSocket(int fd) : fd_(fd) {}
  ClientSocket(ClientSocket&& other) noexcept : fd_(other.fd_) { other.fd_ = -1; }
  ClientSocket& operator=(ClientSocket&& other) noexcept {
    if (this != &other) {
      Close();
      fd_ = other.fd_;
      other.fd_ = -1;
    }
    return *this;
  }
  ClientSocket(const ClientSocket&) = delete;
  ClientSocket& operator=(const ClientSocket&) = delete;
  ~ClientSocket() { Close(); }

  bool ok() const { return fd_ >= 0; }
  int fd() const { return fd_; }
  void Close() {
    if (fd_ >= 0) ::close(fd_);
    fd_ = -1;
  }

  // Sends everything; false on error or timeout.
  bool Send(std::string_view bytes) const {
    size_t done = 0;
    while (done < bytes.size()) {
      const ssize_t n = ::send(fd_, bytes.data() + done, bytes.size() - done, MSG_NOSIGNAL);
      if (n <= 0) return false;
      done += static_cast<size_t>(n);
    }
    return true;
  }

  // Reads until the peer closes (end of stream, or a reset when it closed with our bytes still
  // unread); false when it did not close within kSocketTimeout. `out` may be null.
  bool ReadToEnd(std::string* out = nullptr) const {
    char buffer[65536];
    for (;;) {
      const ssize_t n = ::recv(fd_, buffer, sizeof buffer, 0);
      if (n == 0) return true;
      if (n < 0) return errno != EAGAIN && errno != EWOULDBLOCK && errno != EINTR;
      if (out != nullptr) out->append(buffer, static_cast<size_t>(n));
    }
  }

  // Half-closes and waits for the peer's close: everything sent has then been read and framed.
  bool Finish() const {
    ::shutdown(fd_, SHUT_WR);
    return ReadToEnd();
  }

  // Closes with a reset instead of a FIN (SO_LINGER 0): an abortive disconnect.
  void Reset() {
    const linger hard{1, 0};
    ::setsockopt(fd_, SOL_SOCKET, SO_LINGER, &hard, sizeof hard);
    Close();
  }

 private:
  int fd_ = -1;
};

inline void SetTimeouts(int fd) {
  timeval tv{};
  tv.tv_sec = kSocketTimeout.count();
  ::setsockopt(fd, SOL_SOCKET, SO_RCVTIMEO, &tv, sizeof tv);
  ::setsockopt(fd, SOL_SOCKET, SO_SNDTIMEO, &tv, sizeof tv);
}

inline sockaddr_in Loopback(uint16_t port) {
  sockaddr_in addr{};
  addr.sin_family = AF_INET;
  addr.sin_port = htons(port);
  addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  return addr;
}

// A TCP connection to 127.0.0.1:port with send/receive timeouts; !ok() when refused.
inline ClientSocket Connect(uint16_t port) {
  ClientSocket socket(::socket(AF_INET, SOCK_STREAM, 0));
  if (!socket.ok()) return socket;
  SetTimeouts(socket.fd());
  const sockaddr_in addr = Loopback(port);
  if (::connect(socket.fd(), reinterpret_cast<const sockaddr*>(&addr), sizeof addr) != 0) {
    socket.Close();
  }
  return socket;
}

// Connects, sends, half-closes and waits for the daemon's close; false on any failure.
inline bool SendAndFinish(uint16_t port, std::string_view bytes) {
  ClientSocket socket = Connect(port);
  return socket.ok() && socket.Send(bytes) && socket.Finish();
}

// Sends one UDP datagram to 127.0.0.1:port; false when the kernel refused it.
inline bool SendDatagram(int fd, uint16_t port, std::string_view bytes) {
  const sockaddr_in addr = Loopback(port);
  return ::sendto(fd, bytes.data(), bytes.size(), 0, reinterpret_cast<const sockaddr*>(&addr),
                  sizeof addr) == static_cast<ssize_t>(bytes.size());
}

// One raw HTTP exchange: sends `request` as given and returns everything the server answered
// before closing (empty on failure).
inline std::string RawHttp(uint16_t port, std::string_view request) {
  ClientSocket socket = Connect(port);
  std::string reply;
  if (!socket.ok()) return reply;
  socket.Send(request);  // the server may answer and close before reading it all
  ::shutdown(socket.fd(), SHUT_WR);
  socket.ReadToEnd(&reply);
  return reply;
}

// Status code of a raw HTTP reply ("HTTP/1.1 404 ..."), 0 when there is none.
inline int StatusOf(std::string_view reply) {
  if (reply.size() < 12 || reply.substr(0, 5) != "HTTP/") return 0;
  return std::stoi(std::string(reply.substr(9, 3)));
}

// True in ASan/TSan builds: their allocators keep freed memory resident (quarantine, shadow), so
// resident-memory bounds mean little there.
#if defined(__SANITIZE_ADDRESS__) || defined(__SANITIZE_THREAD__)
inline constexpr bool kUnderSanitizer = true;
#else
inline constexpr bool kUnderSanitizer = false;
#endif
// What a sanitizer build may add to a resident-memory bound: shadow memory and (ASan) a
// quarantine of up to 256 MiB of freed blocks.
inline constexpr int64_t kSanitizerRssAllowance = kUnderSanitizer ? int64_t{800} << 20 : 0;

// A memory figure of a process from /proc/PID/status, in bytes: "VmRSS:" (resident now) or
// "VmHWM:" (the peak resident size so far); -1 when unreadable.
inline int64_t ProcessMemoryBytes(pid_t pid, const std::string& field) {
  std::ifstream status("/proc/" + std::to_string(pid) + "/status");
  std::string key;
  while (status >> key) {
    if (key == field) {
      int64_t kib = -1;
      status >> kib;
      return kib * 1024;
    }
    status.ignore(1 << 16, '\n');
  }
  return -1;
}

// Length-prefixed (u32be) frame of a record.
inline std::string U32Frame(std::string_view record) {
  std::string out;
  const auto size = static_cast<uint32_t>(record.size());
  for (int shift = 24; shift >= 0; shift -= 8) out += static_cast<char>((size >> shift) & 0xff);
  out += record;
  return out;
}

}  // namespace codedrift::testing
