#include "ingest_load_net.h"

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <cstring>
#include <ctime>
#include <fstream>
#include <mutex>
#include <sstream>

#include <arpa/inet.h>
#include <netinet/in.h>
#include <sys/socket.h>
#include <sys/time.h>
#include <unistd.h>

namespace codedrift::bench {
namespace {

constexpr size_t kReceiveBytes = 64 * 1024;  // the daemon's read size (DESIGN.md section 7)
constexpr size_t kSendBytes = 256 * 1024;    // per send() call
constexpr int kUdpBatch = 32;                // datagrams per sendmmsg

sockaddr_in Loopback(uint16_t port) {
  sockaddr_in addr{};
  addr.sin_family = AF_INET;
  addr.sin_port = htons(port);
  addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  return addr;
}

std::string Errno(const std::string& what) { return what + ": " + std::strerror(errno); }

// Sends `slice` of the capture on `fd`, half-closes, and waits for the peer's close.
std::string SendSlice(int fd, std::string_view text, const Slice& slice) {
  uint64_t pos = slice.start;
  uint64_t left = slice.bytes;
  while (left > 0) {
    const size_t n = std::min<uint64_t>({left, text.size() - pos, kSendBytes});
    const ssize_t sent = ::send(fd, text.data() + pos, n, MSG_NOSIGNAL);
    if (sent < 0 && errno == EINTR) continue;
    if (sent <= 0) return Errno("send");
    left -= static_cast<uint64_t>(sent);
    pos = (pos + static_cast<uint64_t>(sent)) % text.size();
  }
  ::shutdown(fd, SHUT_WR);
  char sink[4096];
  for (;;) {
    const ssize_t n = ::recv(fd, sink, sizeof sink, 0);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) break;  // the receiver closed: it has read everything
  }
  return "";
}

}  // namespace

int BindLoopback(int type, uint16_t& port) {
  const int fd = ::socket(AF_INET, type | SOCK_CLOEXEC, 0);
  if (fd < 0) return -1;
  sockaddr_in addr = Loopback(0);
  socklen_t length = sizeof addr;
  if (::bind(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr) != 0 ||
      ::getsockname(fd, reinterpret_cast<sockaddr*>(&addr), &length) != 0) {
    ::close(fd);
    return -1;
  }
  port = ntohs(addr.sin_port);
  return fd;
}

void AcceptUntilStopped(int listen_fd, const std::atomic<bool>& stopping,
                        const std::function<void(int)>& serve) {
  for (;;) {
    const int fd = ::accept4(listen_fd, nullptr, nullptr, SOCK_CLOEXEC);
    if (stopping) {
      if (fd >= 0) ::close(fd);
      return;
    }
    if (fd < 0) {
      if (errno == EINTR || errno == ECONNABORTED) continue;
      return;
    }
    serve(fd);
  }
}

double WallSeconds() {
  return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count();
}

double ThreadCpuSeconds() {
  timespec now{};
  ::clock_gettime(CLOCK_THREAD_CPUTIME_ID, &now);
  return static_cast<double>(now.tv_sec) + static_cast<double>(now.tv_nsec) / 1e9;
}

Result<Capture> Capture::Load(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return Error{path + ": cannot open"};
  std::ostringstream text;
  text << in.rdbuf();
  if (text.str().empty()) return Error{path + ": empty capture"};
  return Capture(std::move(text).str());
}

Capture::Capture(std::string text) : text_(std::move(text)) {
  if (text_.empty() || text_.back() != '\n') text_.push_back('\n');
}

uint64_t Capture::LineStartAtOrAfter(uint64_t offset) const {
  if (offset == 0 || offset >= text_.size()) return 0;
  if (text_[offset - 1] == '\n') return offset;
  const size_t newline = text_.find('\n', offset);
  return newline + 1 >= text_.size() ? 0 : newline + 1;
}

std::vector<Slice> Capture::Slices(int connections, uint64_t total_bytes) const {
  std::vector<Slice> slices;
  const uint64_t size = text_.size();
  const uint64_t each = std::max<uint64_t>(total_bytes / static_cast<uint64_t>(connections), 1);
  for (int i = 0; i < connections; ++i) {
    Slice slice;
    slice.start =
        LineStartAtOrAfter(size * static_cast<uint64_t>(i) / static_cast<uint64_t>(connections));
    // `each` bytes, then up to the end of the line holding the last of them.
    const uint64_t last = (slice.start + each - 1) % size;
    slice.bytes = each + (text_.find('\n', last) - last);
    ForEachRecord(slice, [&](std::string_view) { ++slice.records; });
    slices.push_back(slice);
  }
  return slices;
}

std::vector<std::string> Capture::Datagrams(size_t count, size_t size) const {
  std::vector<std::string> out;
  out.reserve(count);
  size_t pos = 0;
  for (size_t i = 0; i < count; ++i) {
    std::string datagram;
    while (datagram.size() < size) {
      const size_t n = std::min(size - datagram.size(), text_.size() - pos);
      datagram.append(text_, pos, n);
      pos = (pos + n) % text_.size();
    }
    out.push_back(std::move(datagram));
  }
  return out;
}

TcpRun SendTcp(uint16_t port, const Capture& capture, const std::vector<Slice>& slices) {
  TcpRun run;
  std::vector<int> fds;
  for (const Slice& slice : slices) {
    const int fd = ::socket(AF_INET, SOCK_STREAM | SOCK_CLOEXEC, 0);
    const sockaddr_in addr = Loopback(port);
    if (fd < 0 || ::connect(fd, reinterpret_cast<const sockaddr*>(&addr), sizeof addr) != 0) {
      run.error = Errno("connect to 127.0.0.1:" + std::to_string(port));
      if (fd >= 0) ::close(fd);
      break;
    }
    fds.push_back(fd);
    run.bytes += slice.bytes;
    run.records += slice.records;
  }
  if (run.error.empty()) {
    std::mutex mu;
    std::vector<std::thread> senders;
    const double started = WallSeconds();
    for (size_t i = 0; i < fds.size(); ++i) {
      senders.emplace_back([&, i] {
        const std::string error = SendSlice(fds[i], capture.text(), slices[i]);
        if (!error.empty()) {
          std::lock_guard lock(mu);
          run.error = error;
        }
      });
    }
    for (auto& sender : senders) sender.join();
    run.seconds = WallSeconds() - started;
  }
  for (int fd : fds) ::close(fd);
  return run;
}

namespace {

UdpRun SendUdpOne(uint16_t port, const std::vector<std::string>& datagrams, size_t first,
                  double rate, double seconds) {
  UdpRun run;
  const int fd = ::socket(AF_INET, SOCK_DGRAM | SOCK_CLOEXEC, 0);
  if (fd < 0 || datagrams.empty()) return run;
  sockaddr_in addr = Loopback(port);
  if (::connect(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr) != 0) {
    ::close(fd);
    return run;
  }
  std::vector<iovec> iov(kUdpBatch);
  std::vector<mmsghdr> messages(kUdpBatch);
  const auto total = static_cast<uint64_t>(rate * seconds);
  size_t next = first % datagrams.size();
  const double started = WallSeconds();
  while (run.sent < total) {
    // Pacing: send what is due by now, in batches; sleep briefly when ahead.
    const double elapsed = WallSeconds() - started;
    const auto due = std::min<uint64_t>(total, static_cast<uint64_t>(elapsed * rate) + 1);
    if (run.sent >= due) {
      timespec pause{0, 50'000};
      ::nanosleep(&pause, nullptr);
      continue;
    }
    const int batch = static_cast<int>(std::min<uint64_t>(due - run.sent, kUdpBatch));
    for (int i = 0; i < batch; ++i) {
      const std::string& d = datagrams[(next + static_cast<size_t>(i)) % datagrams.size()];
      iov[static_cast<size_t>(i)] = {const_cast<char*>(d.data()), d.size()};
      messages[static_cast<size_t>(i)] = {};
      messages[static_cast<size_t>(i)].msg_hdr.msg_iov = &iov[static_cast<size_t>(i)];
      messages[static_cast<size_t>(i)].msg_hdr.msg_iovlen = 1;
    }
    const int sent = ::sendmmsg(fd, messages.data(), static_cast<unsigned>(batch), 0);
    if (sent <= 0) continue;  // ENOBUFS and the like: retry (they count as not sent)
    run.sent += static_cast<uint64_t>(sent);
    next = (next + static_cast<size_t>(sent)) % datagrams.size();
  }
  run.seconds = WallSeconds() - started;
  ::close(fd);
  return run;
}

}  // namespace

UdpRun SendUdp(uint16_t port, const std::vector<std::string>& datagrams, double rate,
               double seconds, int senders) {
  std::vector<UdpRun> runs(static_cast<size_t>(std::max(senders, 1)));
  std::vector<std::thread> threads;
  for (size_t i = 0; i < runs.size(); ++i) {
    threads.emplace_back([&, i] {
      runs[i] = SendUdpOne(port, datagrams, i * datagrams.size() / runs.size(),
                           rate / static_cast<double>(runs.size()), seconds);
    });
  }
  UdpRun total;
  for (size_t i = 0; i < runs.size(); ++i) {
    threads[i].join();
    total.sent += runs[i].sent;
    total.seconds = std::max(total.seconds, runs[i].seconds);
  }
  return total;
}

PlainTcpReceiver::PlainTcpReceiver() = default;
PlainTcpReceiver::~PlainTcpReceiver() { Stop(); }

Status PlainTcpReceiver::Start() {
  listen_fd_ = BindLoopback(SOCK_STREAM, port_);
  if (listen_fd_ < 0 || ::listen(listen_fd_, 128) != 0) return Error{Errno("baseline listen")};
  acceptor_ = std::thread([this] { AcceptLoop(); });
  return Ok{};
}

void PlainTcpReceiver::AcceptLoop() {
  AcceptUntilStopped(listen_fd_, stopping_,
                     [this](int fd) { connections_.emplace_back([this, fd] { Serve(fd); }); });
}

void PlainTcpReceiver::Serve(int fd) {
  const double cpu_start = ThreadCpuSeconds();
  std::unique_ptr<char[]> buffer(new char[kReceiveBytes]);
  uint64_t received = 0;
  for (;;) {
    const ssize_t n = ::recv(fd, buffer.get(), kReceiveBytes, 0);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) break;
    received += static_cast<uint64_t>(n);
  }
  // Count before closing, so a sender that sees the close also sees the count.
  bytes_ += received;
  cpu_micros_ += static_cast<uint64_t>((ThreadCpuSeconds() - cpu_start) * 1e6);
  ::close(fd);
}

void PlainTcpReceiver::Stop() {
  if (listen_fd_ < 0 || stopping_.exchange(true)) return;
  ::shutdown(listen_fd_, SHUT_RDWR);  // wakes accept()
  if (acceptor_.joinable()) acceptor_.join();
  for (auto& connection : connections_) connection.join();
  ::close(listen_fd_);
}

PlainUdpReceiver::PlainUdpReceiver(int receive_buffer_bytes) : asked_(receive_buffer_bytes) {}
PlainUdpReceiver::~PlainUdpReceiver() { Stop(); }

Status PlainUdpReceiver::Start() {
  fd_ = BindLoopback(SOCK_DGRAM, port_);
  if (fd_ < 0) return Error{Errno("baseline udp bind")};
  socklen_t length = sizeof granted_;
  ::setsockopt(fd_, SOL_SOCKET, SO_RCVBUF, &asked_, sizeof asked_);
  ::getsockopt(fd_, SOL_SOCKET, SO_RCVBUF, &granted_, &length);
  if (granted_ < asked_) {  // past net.core.rmem_max, as the daemon does when it may
    ::setsockopt(fd_, SOL_SOCKET, SO_RCVBUFFORCE, &asked_, sizeof asked_);
    ::getsockopt(fd_, SOL_SOCKET, SO_RCVBUF, &granted_, &length);
  }
  timeval wake{0, 100'000};  // recv returns now and then so Stop is noticed
  ::setsockopt(fd_, SOL_SOCKET, SO_RCVTIMEO, &wake, sizeof wake);
  thread_ = std::thread([this] { Loop(); });
  return Ok{};
}

void PlainUdpReceiver::Loop() {
  std::unique_ptr<char[]> buffer(new char[kReceiveBytes]);
  while (!stopping_) {
    const ssize_t n = ::recv(fd_, buffer.get(), kReceiveBytes, 0);
    if (n >= 0) datagrams_.fetch_add(1, std::memory_order_relaxed);
  }
}

void PlainUdpReceiver::Stop() {
  if (fd_ < 0 || stopping_.exchange(true)) return;
  if (thread_.joinable()) thread_.join();
  ::close(fd_);
}

}  // namespace codedrift::bench
