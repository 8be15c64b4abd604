#include "soak_webhook.h"

#include <algorithm>
#include <cctype>
#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <string>

#include <nlohmann/json.hpp>

#include "ingest_load_net.h"
#include <sys/socket.h>
#include <sys/time.h>
#include <unistd.h>

namespace codedrift::soak {
namespace {

std::string Lower(std::string text) {
  std::transform(text.begin(), text.end(), text.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return text;
}

// The value of header `name` (lower case) in `head`, or "".
std::string Header(const std::string& head, const std::string& name) {
  const std::string lower = Lower(head);
  const size_t at = lower.find("\r\n" + name + ":");
  if (at == std::string::npos) return "";
  const size_t start = head.find_first_not_of(' ', at + 3 + name.size());
  const size_t end = head.find("\r\n", start);
  return head.substr(start, end - start);
}

void WriteAll(int fd, const std::string& bytes) {
  size_t done = 0;
  while (done < bytes.size()) {
    const ssize_t n = ::send(fd, bytes.data() + done, bytes.size() - done, MSG_NOSIGNAL);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) return;
    done += static_cast<size_t>(n);
  }
}

}  // namespace

FlakyWebhookReceiver::~FlakyWebhookReceiver() { Stop(); }

Status FlakyWebhookReceiver::Start() {
  listen_fd_ = bench::BindLoopback(SOCK_STREAM, port_);
  if (listen_fd_ < 0 || ::listen(listen_fd_, 16) != 0) {
    return Error{std::string("webhook receiver: ") + std::strerror(errno)};
  }
  thread_ = std::thread([this] { Loop(); });
  return Ok{};
}

void FlakyWebhookReceiver::Loop() {
  bench::AcceptUntilStopped(listen_fd_, stopping_, [this](int fd) {
    Serve(fd);
    ::close(fd);
  });
}

void FlakyWebhookReceiver::Serve(int fd) {
  timeval patience{5, 0};  // a stuck client must not stall the receiver
  ::setsockopt(fd, SOL_SOCKET, SO_RCVTIMEO, &patience, sizeof patience);
  std::string request;
  char buffer[8192];
  size_t head_end = std::string::npos;
  size_t want = 0;
  for (;;) {
    if (head_end == std::string::npos &&
        (head_end = request.find("\r\n\r\n")) != std::string::npos) {
      want = head_end + 4 + std::strtoull(Header(request, "content-length").c_str(), nullptr, 10);
    }
    if (head_end != std::string::npos && request.size() >= want) break;
    const ssize_t n = ::recv(fd, buffer, sizeof buffer, 0);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) return;  // the client gave up: not an answered request
    request.append(buffer, static_cast<size_t>(n));
  }
  const std::string head = request.substr(0, head_end);
  const auto body = nlohmann::json::parse(request.substr(head_end + 4), nullptr, false);
  if (head.rfind("POST ", 0) != 0 || !body.is_object() || !body.contains("stream") ||
      !body.contains("model")) {
    ++malformed_;
  }
  const bool fail = requests_++ % 2 == 0;
  if (fail) {
    ++failed_;
    WriteAll(
        fd, "HTTP/1.1 500 Internal Server Error\r\nContent-Length: 0\r\nConnection: close\r\n\r\n");
  } else {
    delivered_keys_.insert(Header(head, "x-codedrift-delivery"));
    distinct_.store(delivered_keys_.size());
    ++ok_;
    WriteAll(fd, "HTTP/1.1 200 OK\r\nContent-Length: 0\r\nConnection: close\r\n\r\n");
  }
}

void FlakyWebhookReceiver::Stop() {
  if (listen_fd_ < 0 || stopping_.exchange(true)) return;
  ::shutdown(listen_fd_, SHUT_RDWR);  // wakes accept()
  if (thread_.joinable()) thread_.join();
  ::close(listen_fd_);
}

}  // namespace codedrift::soak
