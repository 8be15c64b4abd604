#include "soak_traffic.h"

#include <algorithm>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <ctime>
#include <fstream>
#include <sstream>

#include <arpa/inet.h>
#include <netinet/in.h>
#include <sys/socket.h>
#include <sys/time.h>
#include <sys/un.h>
#include <unistd.h>

namespace codedrift::soak {
namespace {

constexpr int kUdpBatch = 32;  // datagrams per sendmmsg

std::string Errno(const std::string& what) { return what + ": " + std::strerror(errno); }

void AppendPrefix(std::string& out, WireFraming framing, size_t length) {
  const int width = framing == WireFraming::kU16be ? 2 : 4;
  for (int shift = (width - 1) * 8; shift >= 0; shift -= 8) {
    out.push_back(static_cast<char>((length >> shift) & 0xff));
  }
}

// A connected stream socket to "tcp:PORT" or "unix:PATH", or -1 with errno set.
int Connect(const std::string& target) {
  if (target.rfind("tcp:", 0) == 0) {
    const int fd = ::socket(AF_INET, SOCK_STREAM | SOCK_CLOEXEC, 0);
    sockaddr_in addr{};
    addr.sin_family = AF_INET;
    addr.sin_port = htons(static_cast<uint16_t>(std::stoi(target.substr(4))));
    addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
    if (fd >= 0 && ::connect(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr) == 0) return fd;
    if (fd >= 0) ::close(fd);
    return -1;
  }
  const int fd = ::socket(AF_UNIX, SOCK_STREAM | SOCK_CLOEXEC, 0);
  sockaddr_un addr{};
  addr.sun_family = AF_UNIX;
  std::strncpy(addr.sun_path, target.c_str() + 5, sizeof addr.sun_path - 1);
  if (fd >= 0 && ::connect(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr) == 0) return fd;
  if (fd >= 0) ::close(fd);
  return -1;
}

double Now() {
  timespec now{};
  ::clock_gettime(CLOCK_MONOTONIC, &now);
  return static_cast<double>(now.tv_sec) + static_cast<double>(now.tv_nsec) / 1e9;
}

}  // namespace

std::vector<Chunk> MakeChunks(const bench::Capture& capture, WireFraming framing,
                              size_t chunk_bytes) {
  std::vector<Chunk> chunks(1);
  bench::Slice whole{.start = 0, .bytes = capture.text().size()};
  capture.ForEachRecord(whole, [&](std::string_view line) {
    if (chunks.back().wire.size() >= chunk_bytes) chunks.emplace_back();
    Chunk& chunk = chunks.back();
    if (framing == WireFraming::kLines) {
      chunk.wire.append(line);
      chunk.payload += line.size();
    } else {
      const std::string_view record = line.substr(0, line.size() - 1);  // without '\n'
      AppendPrefix(chunk.wire, framing, record.size());
      chunk.wire.append(record);
      chunk.payload += record.size();
    }
    ++chunk.records;
  });
  return chunks;
}

FlatOutSender::FlatOutSender(std::string target, const std::vector<Chunk>& chunks, size_t first)
    : target_(std::move(target)), chunks_(chunks), next_(first % chunks.size()) {}

FlatOutSender::~FlatOutSender() { Stop(); }

Status FlatOutSender::Start() {
  fd_ = Connect(target_);
  if (fd_ < 0) return Error{Errno("connect to " + target_)};
  thread_ = std::thread([this] { Loop(); });
  return Ok{};
}

void FlatOutSender::Loop() {
  while (!stopping_.load(std::memory_order_relaxed)) {
    const Chunk& chunk = chunks_[next_];
    size_t done = 0;
    while (done < chunk.wire.size()) {  // a chunk is always finished: counts stay whole
      const ssize_t n =
          ::send(fd_, chunk.wire.data() + done, chunk.wire.size() - done, MSG_NOSIGNAL);
      if (n < 0 && errno == EINTR) continue;
      if (n <= 0) {
        error_ = Errno("send to " + target_);
        return;
      }
      done += static_cast<size_t>(n);
    }
    bytes_.fetch_add(chunk.wire.size(), std::memory_order_relaxed);
    records_.fetch_add(chunk.records, std::memory_order_relaxed);
    payload_.fetch_add(chunk.payload, std::memory_order_relaxed);
    next_ = (next_ + 1) % chunks_.size();
  }
}

SentTotals FlatOutSender::totals() const {
  return {bytes_.load(), records_.load(), payload_.load()};
}

std::string FlatOutSender::Stop() {
  if (fd_ < 0 || stopping_.exchange(true)) return error_;
  if (thread_.joinable()) thread_.join();
  // Half-close and wait for the daemon's close: it closes only after reading everything.
  ::shutdown(fd_, SHUT_WR);
  timeval patience{60, 0};  // a daemon that never closes must not hang the soak
  ::setsockopt(fd_, SOL_SOCKET, SO_RCVTIMEO, &patience, sizeof patience);
  char sink[4096];
  for (;;) {
    const ssize_t n = ::recv(fd_, sink, sizeof sink, 0);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) break;
  }
  ::close(fd_);
  return error_;
}

PacedUdpSender::PacedUdpSender(uint16_t port, std::vector<std::string> datagrams, double rate)
    : port_(port), datagrams_(std::move(datagrams)), rate_(rate) {}

PacedUdpSender::~PacedUdpSender() { Stop(); }

Status PacedUdpSender::Start() {
  fd_ = ::socket(AF_INET, SOCK_DGRAM | SOCK_CLOEXEC, 0);
  sockaddr_in addr{};
  addr.sin_family = AF_INET;
  addr.sin_port = htons(port_);
  addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  if (fd_ < 0 || ::connect(fd_, reinterpret_cast<sockaddr*>(&addr), sizeof addr) != 0) {
    return Error{Errno("udp connect")};
  }
  thread_ = std::thread([this] { Loop(); });
  return Ok{};
}

void PacedUdpSender::Loop() {
  std::vector<iovec> iov(kUdpBatch);
  std::vector<mmsghdr> messages(kUdpBatch);
  size_t next = 0;
  uint64_t sent = 0;
  const double started = Now();
  while (!stopping_.load(std::memory_order_relaxed)) {
    // Send what is due by now, in batches; sleep briefly when ahead.
    const auto due = static_cast<uint64_t>((Now() - started) * rate_) + 1;
    if (sent >= due) {
      timespec pause{0, 200'000};
      ::nanosleep(&pause, nullptr);
      continue;
    }
    const int batch = static_cast<int>(std::min<uint64_t>(due - sent, kUdpBatch));
    for (int i = 0; i < batch; ++i) {
      const std::string& d = datagrams_[(next + static_cast<size_t>(i)) % datagrams_.size()];
      iov[static_cast<size_t>(i)] = {const_cast<char*>(d.data()), d.size()};
      messages[static_cast<size_t>(i)] = {};
      messages[static_cast<size_t>(i)].msg_hdr.msg_iov = &iov[static_cast<size_t>(i)];
      messages[static_cast<size_t>(i)].msg_hdr.msg_iovlen = 1;
    }
    const int n = ::sendmmsg(fd_, messages.data(), static_cast<unsigned>(batch), 0);
    if (n <= 0) continue;  // ENOBUFS and the like: not sent, not counted; retried
    uint64_t bytes = 0;
    for (int i = 0; i < n; ++i) bytes += iov[static_cast<size_t>(i)].iov_len;
    sent += static_cast<uint64_t>(n);
    sent_.store(sent, std::memory_order_relaxed);
    bytes_.fetch_add(bytes, std::memory_order_relaxed);
    next = (next + static_cast<size_t>(n)) % datagrams_.size();
  }
}

SentTotals PacedUdpSender::totals() const { return {bytes_.load(), sent_.load(), bytes_.load()}; }

void PacedUdpSender::Stop() {
  if (fd_ < 0 || stopping_.exchange(true)) return;
  if (thread_.joinable()) thread_.join();
  ::close(fd_);
}

int64_t UdpSocketDrops(uint16_t port) {
  std::ifstream in("/proc/net/udp");
  std::string line;
  char wanted[16];
  std::snprintf(wanted, sizeof wanted, "0100007F:%04X", port);  // 127.0.0.1, host byte order
  while (std::getline(in, line)) {
    std::istringstream fields(line);
    std::string slot, local, field;
    if (!(fields >> slot >> local) || local != wanted) continue;
    std::string last;
    while (fields >> field) last = field;  // `drops` is the last column
    return std::strtoll(last.c_str(), nullptr, 10);
  }
  return -1;
}

}  // namespace codedrift::soak
