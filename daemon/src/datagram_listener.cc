// udp:// listener: one datagram is one record. Receives in bursts (one asynchronous wait, then
// non-blocking reads until the queue is empty) so a busy link costs one wake-up per burst.
#include <algorithm>
#include <atomic>
#include <condition_variable>
#include <memory>
#include <mutex>

#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/udp.hpp>
#include <boost/asio/post.hpp>

#include "listener_core.h"
#include <sys/socket.h>

namespace codedrift {
namespace {

namespace asio = boost::asio;
using boost::system::error_code;
using udp = asio::ip::udp;

// No UDP payload exceeds 65535 bytes; with MSG_TRUNC the kernel reports a longer datagram's
// true length, so the buffer need not be larger than the longest record we accept.
constexpr size_t kMaxDatagramBytes = 65536;
// Datagrams read without waiting after a wake-up, before yielding to other work.
constexpr int kBurst = 64;
// While stopping: how many queued datagrams to read between clock checks.
constexpr int kDrainClockEvery = 256;

// Tallies of one burst, added to the stream's counters once per burst.
struct BurstCounts {
  uint64_t bytes = 0;
  uint64_t records = 0;
  uint64_t not_allowed = 0;
  uint64_t oversized = 0;

  void PublishTo(StreamCounters& counters) {
    if (bytes != 0) counters.bytes_total.fetch_add(bytes, std::memory_order_relaxed);
    if (records != 0) counters.records_total.fetch_add(records, std::memory_order_relaxed);
    if (not_allowed != 0) counters.Add(RecordRejectReason::kNotAllowed, not_allowed);
    if (oversized != 0) counters.Add(RecordRejectReason::kOversizedDatagram, oversized);
    *this = BurstCounts{};
  }
};

// Receives on one UDP socket, on one ingest context run by one thread (so no strand).
class DatagramListener : public ListenerCore,
                         public std::enable_shared_from_this<DatagramListener> {
 public:
  DatagramListener(asio::io_context& io, std::shared_ptr<const ListenerContext> context)
      : io_(io),
        context_(std::move(context)),
        socket_(io),
        buffer_size_(std::min<size_t>(context_->config.max_record_bytes, kMaxDatagramBytes)),
        buffer_(new char[buffer_size_]) {}

  Status Start() override {
    if (stopping_) return Error{Where() + ": the listener was stopped"};
    const Status bound = Bind();
    if (!bound.ok()) {
      error_code ignored;
      socket_.close(ignored);
      return bound;
    }
    {
      std::lock_guard<std::mutex> lock(mu_);
      receiving_ = true;
    }
    context_->Log("stream " + context_->config.name + ": listening on " + Where() + " (datagram)");
    asio::post(socket_.get_executor(), [self = shared_from_this()] { self->Receive(); });
    return Ok{};
  }

  uint16_t bound_port() const override { return port_; }

  // Reads what the kernel has already queued (until the drain limit), then closes. The drain
  // runs in the completion of the pending receive, which the cancel below brings about (with
  // the datagram it may already hold), so no datagram is overwritten or reordered.
  void Stop(std::chrono::milliseconds drain_limit) override {
    if (stopping_.exchange(true)) return;
    asio::post(socket_.get_executor(), [self = shared_from_this(), drain_limit] {
      if (!self->socket_.is_open()) return self->EndReceiving();  // never started
      self->draining_ = true;
      self->drain_deadline_ = std::chrono::steady_clock::now() + drain_limit;
      error_code ignored;
      self->socket_.cancel(ignored);
    });
  }

  bool WaitStopped(std::chrono::steady_clock::time_point deadline) override {
    std::unique_lock<std::mutex> lock(mu_);
    return changed_.wait_until(lock, deadline, [&] { return !receiving_; });
  }

 private:
  std::string Where() const {
    ListenAddress bound = context_->config.listen;
    if (port_ != 0) bound.port = port_;
    return bound.ToString();
  }

  Status Bind() {
    const ListenAddress& listen = context_->config.listen;
    error_code ec;
    udp::endpoint endpoint;
    const asio::ip::address address = asio::ip::make_address(listen.host, ec);
    if (!ec) {
      endpoint = udp::endpoint(address, listen.port);
    } else {
      udp::resolver resolver(io_);
      const auto results = resolver.resolve(listen.host, std::to_string(listen.port), ec);
      if (ec || results.empty()) {
        return Error{Where() + ": cannot resolve " + listen.host + ": " + ec.message()};
      }
      endpoint = results.begin()->endpoint();
    }
    socket_.open(endpoint.protocol(), ec);
    if (!ec) SetReceiveBuffer();
    if (!ec) socket_.bind(endpoint, ec);
    if (!ec) socket_.non_blocking(true, ec);  // for the burst reads; async reads are unaffected
    if (ec) return Error{Where() + ": cannot listen: " + ec.message()};
    port_ = socket_.local_endpoint(ec).port();
    return Ok{};
  }

  // A large receive buffer is what keeps bursts from being dropped (DESIGN.md §7: 0.5-2% loss
  // with the default 208 KiB, none with 8 MiB). The kernel caps the request at
  // net.core.rmem_max unless we may force it; it reports back twice the usable size.
  void SetReceiveBuffer() {
    const uint32_t asked = context_->config.receive_buffer_bytes;
    error_code ec;
    socket_.set_option(asio::socket_base::receive_buffer_size(static_cast<int>(asked)), ec);
    asio::socket_base::receive_buffer_size granted;
    socket_.get_option(granted, ec);
    if (granted.value() < static_cast<int>(asked)) {
      const int value = static_cast<int>(asked);
      // Needs CAP_NET_ADMIN; without it this fails and the capped size stays.
      if (::setsockopt(socket_.native_handle(), SOL_SOCKET, SO_RCVBUFFORCE, &value, sizeof value) ==
          0) {
        socket_.get_option(granted, ec);
      }
    }
    std::string line = "stream " + context_->config.name + ": SO_RCVBUF asked " +
                       std::to_string(asked) + " bytes, kernel granted " +
                       std::to_string(granted.value());
    if (granted.value() < static_cast<int>(asked)) {
      line += " (capped by net.core.rmem_max; raise it to avoid drops in bursts)";
    }
    context_->Log(line);
  }

  void Receive() {
    socket_.async_receive_from(
        asio::buffer(buffer_.get(), buffer_size_), sender_, MSG_TRUNC,
        [self = shared_from_this()](error_code ec, size_t n) { self->OnReceive(ec, n); });
  }

  void OnReceive(error_code ec, size_t n) {
    BurstCounts counts;
    if (!ec) Deliver(n, counts);
    if (draining_) {
      for (int i = 1; ReceiveNow(counts); ++i) {
        if (i % kDrainClockEvery == 0 && std::chrono::steady_clock::now() >= drain_deadline_) {
          break;
        }
      }
      counts.PublishTo(*context_->counters);
      error_code ignored;
      socket_.close(ignored);
      return EndReceiving();
    }
    if (ec == asio::error::operation_aborted) {  // the io_context is shutting down
      counts.PublishTo(*context_->counters);
      return EndReceiving();
    }
    if (!ec) {
      for (int i = 0; i < kBurst && ReceiveNow(counts); ++i) {
      }
    }
    counts.PublishTo(*context_->counters);
    Receive();  // other errors (an ICMP error queued on the socket) are transient
  }

  // One non-blocking read; false when nothing is queued (or on an error: the next
  // asynchronous receive reports or clears it).
  bool ReceiveNow(BurstCounts& counts) {
    error_code ec;
    const size_t n =
        socket_.receive_from(asio::buffer(buffer_.get(), buffer_size_), sender_, MSG_TRUNC, ec);
    if (ec) return false;
    Deliver(n, counts);
    return true;
  }

  // `n` is the datagram's true length (MSG_TRUNC), which may exceed the buffer.
  void Deliver(size_t n, BurstCounts& counts) {
    counts.bytes += n;
    if (!Allowed()) {
      ++counts.not_allowed;
      return;
    }
    if (n > context_->config.max_record_bytes) {
      ++counts.oversized;
      return;
    }
    ++counts.records;
    context_->handler(std::string_view(buffer_.get(), n));
  }

  // Senders rarely change between datagrams: remember the last verdict.
  bool Allowed() {
    if (has_last_sender_ && sender_ == last_sender_) return last_allowed_;
    const asio::ip::address address = sender_.address();
    if (address.is_v4()) {
      last_allowed_ = context_->config.Allows(address.to_v4().to_bytes());
    } else {
      last_allowed_ = context_->config.Allows(address.to_v6().to_bytes());
    }
    last_sender_ = sender_;
    has_last_sender_ = true;
    return last_allowed_;
  }

  void EndReceiving() {
    std::lock_guard<std::mutex> lock(mu_);
    receiving_ = false;
    changed_.notify_all();
  }

  asio::io_context& io_;
  const std::shared_ptr<const ListenerContext> context_;
  udp::socket socket_;  // its context's thread only, after Start
  const size_t buffer_size_;
  std::unique_ptr<char[]> buffer_;
  udp::endpoint sender_;
  udp::endpoint last_sender_;
  bool last_allowed_ = false;
  bool has_last_sender_ = false;
  bool draining_ = false;  // Stop asked; the socket's thread only
  std::chrono::steady_clock::time_point drain_deadline_;
  std::atomic<uint16_t> port_{0};
  std::atomic<bool> stopping_{false};

  std::mutex mu_;  // guards the members below
  std::condition_variable changed_;
  bool receiving_ = false;
};

}  // namespace

std::shared_ptr<ListenerCore> MakeDatagramListener(asio::io_context& io,
                                                   std::shared_ptr<const ListenerContext> context) {
  return std::make_shared<DatagramListener>(io, std::move(context));
}

}  // namespace codedrift
