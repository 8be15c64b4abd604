// tcp:// and unix:// stream listeners: accept, admit (allow list, max_connections), read into
// a 64 KiB buffer, frame, deliver; idle and drain deadlines on one timer per connection.
#include <atomic>
#include <condition_variable>
#include <filesystem>
#include <map>
#include <memory>
#include <mutex>
#include <type_traits>
#include <vector>

#include <boost/asio/dispatch.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/local/stream_protocol.hpp>
#include <boost/asio/post.hpp>
#include <boost/asio/steady_timer.hpp>

#include "connection_framer.h"
#include "io_pool.h"
#include "listener_core.h"
#include <sys/stat.h>

namespace codedrift {
namespace {

namespace asio = boost::asio;
using boost::system::error_code;
using tcp = asio::ip::tcp;
using UnixStream = asio::local::stream_protocol;
using SteadyTime = std::chrono::steady_clock::time_point;

// 64 KiB receive buffers beat 256 KiB on this machine kind (DESIGN.md §7): they stay in cache.
constexpr size_t kReadBufferBytes = 64 * 1024;
constexpr auto kAcceptRetryDelay = std::chrono::milliseconds(100);

template <class Protocol>
class SocketListener;

// One accepted connection. Lives on one io_context of the pool, run by one thread, so its
// handlers never run concurrently; keeps its listener's state alive.
template <class Protocol>
class Connection : public std::enable_shared_from_this<Connection<Protocol>> {
 public:
  using Socket = typename Protocol::socket;

  Connection(Socket socket, std::shared_ptr<SocketListener<Protocol>> owner, uint64_t id)
      : socket_(std::move(socket)),
        timer_(socket_.get_executor()),
        owner_(std::move(owner)),
        context_(owner_->context()),
        id_(id),
        buffer_(new char[kReadBufferBytes]),
        framer_(context_.config),
        idle_(context_.config.idle_timeout) {}
  ~Connection() { owner_->Forget(id_); }

  void Start() {
    asio::dispatch(socket_.get_executor(), [self = this->shared_from_this()] {
      self->last_read_ = std::chrono::steady_clock::now();
      self->ArmTimer(self->NextDeadline());  // Stop may already have run
      self->Read();
    });
  }

  // Shut the receive side: the kernel hands over what the peer already sent, then end of
  // stream; a peer that keeps sending is cut off at the drain deadline.
  void Stop(std::chrono::milliseconds drain_limit) {
    asio::post(socket_.get_executor(), [self = this->shared_from_this(), drain_limit] {
      if (self->finished_ || self->draining_) return;
      self->draining_ = true;
      self->drain_deadline_ = std::chrono::steady_clock::now() + drain_limit;
      error_code ignored;
      self->socket_.shutdown(asio::socket_base::shutdown_receive, ignored);
      self->ArmTimer(self->NextDeadline());
    });
  }

 private:
  void Read() {
    socket_.async_read_some(
        asio::buffer(buffer_.get(), kReadBufferBytes),
        [self = this->shared_from_this()](error_code ec, size_t n) { self->OnRead(ec, n); });
  }

  void OnRead(error_code ec, size_t n) {
    if (finished_) return;  // a deadline closed the connection; this read was cancelled
    StreamCounters& counters = *context_.counters;
    if (n > 0) {
      counters.bytes_total.fetch_add(n, std::memory_order_relaxed);
      last_read_ = std::chrono::steady_clock::now();
      const bool framed =
          framer_.Feed(std::string_view(buffer_.get(), n), context_.handler, context_.run_handler);
      framer_.Publish(counters);
      if (!framed) return Finish(ConnectionCloseReason::kFramingLost);
    }
    if (ec) {
      return Finish(draining_ ? ConnectionCloseReason::kStopped : ConnectionCloseReason::kPeer);
    }
    Read();
  }

  SteadyTime NextDeadline() const {
    SteadyTime next = SteadyTime::max();
    if (idle_.count() > 0) next = last_read_ + idle_;
    if (draining_ && drain_deadline_ < next) next = drain_deadline_;
    return next;
  }

  // Re-arming cancels the pending wait; its handler sees operation_aborted and leaves the
  // re-arming to us, so exactly one wait is ever pending.
  void ArmTimer(SteadyTime at) {
    if (at == SteadyTime::max()) return;
    timer_.expires_at(at);
    timer_.async_wait([self = this->shared_from_this()](error_code ec) { self->OnTimer(ec); });
  }

  void OnTimer(error_code ec) {
    if (ec == asio::error::operation_aborted || finished_) return;
    const SteadyTime now = std::chrono::steady_clock::now();
    if (draining_ && now >= drain_deadline_) return Finish(ConnectionCloseReason::kStopped);
    if (idle_.count() > 0 && now >= last_read_ + idle_) return Finish(ConnectionCloseReason::kIdle);
    ArmTimer(NextDeadline());  // bytes arrived since: sleep until the new deadline
  }

  void Finish(ConnectionCloseReason reason) {
    if (finished_) return;
    finished_ = true;
    framer_.Finish(context_.handler);  // deliver an unterminated last line; count truncation
    framer_.Publish(*context_.counters);
    // Count before closing, so a peer that sees the close also sees the counts.
    context_.counters->connections.fetch_sub(1, std::memory_order_relaxed);
    context_.counters->Add(reason);
    timer_.cancel();
    error_code ignored;
    socket_.close(ignored);
  }

  Socket socket_;
  asio::steady_timer timer_;
  const std::shared_ptr<SocketListener<Protocol>> owner_;
  const ListenerContext& context_;  // owned by owner_
  const uint64_t id_;
  std::unique_ptr<char[]> buffer_;
  ConnectionFramer framer_;
  const std::chrono::milliseconds idle_;
  SteadyTime last_read_;
  SteadyTime drain_deadline_;
  bool draining_ = false;
  bool finished_ = false;
};

// Accepts connections of one protocol and tracks them for Stop and WaitStopped.
template <class Protocol>
class SocketListener : public ListenerCore,
                       public std::enable_shared_from_this<SocketListener<Protocol>> {
 public:
  using Socket = typename Protocol::socket;
  static constexpr bool kIsTcp = std::is_same_v<Protocol, tcp>;

  SocketListener(IoPool& pool, std::shared_ptr<const ListenerContext> context)
      : pool_(pool),
        io_(pool.Next()),
        context_(std::move(context)),
        acceptor_(io_),
        retry_timer_(acceptor_.get_executor()) {}

  const ListenerContext& context() const { return *context_; }

  Status Start() override {
    if (stopping_) return Error{Where() + ": the listener was stopped"};
    const Status bound = Bind();
    if (!bound.ok()) {
      error_code ignored;
      acceptor_.close(ignored);
      return bound;
    }
    {
      std::lock_guard<std::mutex> lock(mu_);
      accepting_ = true;
    }
    context_->Log("stream " + context_->config.name + ": listening on " + Where() + " (" +
                  std::string(FramingName(context_->config.framing)) + ")");
    asio::post(acceptor_.get_executor(), [self = this->shared_from_this()] { self->Accept(); });
    return Ok{};
  }

  uint16_t bound_port() const override { return port_; }

  void Stop(std::chrono::milliseconds drain_limit) override {
    if (stopping_.exchange(true)) return;
    asio::post(acceptor_.get_executor(), [self = this->shared_from_this()] {
      error_code ignored;
      self->acceptor_.close(ignored);
      self->retry_timer_.cancel();
      if constexpr (!kIsTcp) {
        std::error_code not_removed;  // already gone: nothing to do
        if (self->bound_) std::filesystem::remove(self->context_->config.listen.path, not_removed);
      }
    });
    // Lock the connections outside the mutex: dropping the last reference runs ~Connection,
    // which takes the mutex itself.
    std::vector<std::shared_ptr<Connection<Protocol>>> live;
    {
      std::lock_guard<std::mutex> lock(mu_);
      for (auto& [id, weak] : connections_) {
        if (auto connection = weak.lock()) live.push_back(std::move(connection));
      }
    }
    for (const auto& connection : live) connection->Stop(drain_limit);
  }

  bool WaitStopped(SteadyTime deadline) override {
    std::unique_lock<std::mutex> lock(mu_);
    return changed_.wait_until(lock, deadline, [&] { return !accepting_ && connections_.empty(); });
  }

  void Forget(uint64_t id) {
    std::lock_guard<std::mutex> lock(mu_);
    connections_.erase(id);
    changed_.notify_all();
  }

 private:
  std::string Where() const {
    const ListenAddress& listen = context_->config.listen;
    if constexpr (kIsTcp) {
      ListenAddress bound = listen;
      if (port_ != 0) bound.port = port_;
      return bound.ToString();
    } else {
      return listen.ToString();
    }
  }

  Status Bind() {
    error_code ec;
    typename Protocol::endpoint endpoint;
    if constexpr (kIsTcp) {
      const ListenAddress& listen = context_->config.listen;
      const asio::ip::address address = asio::ip::make_address(listen.host, ec);
      if (!ec) {
        endpoint = tcp::endpoint(address, listen.port);
      } else {
        tcp::resolver resolver(io_);
        const auto results = resolver.resolve(listen.host, std::to_string(listen.port), ec);
        if (ec || results.empty()) {
          return Error{Where() + ": cannot resolve " + listen.host + ": " + ec.message()};
        }
        endpoint = results.begin()->endpoint();
      }
    } else {
      const Status cleared = ClearStaleSocketFile();
      if (!cleared.ok()) return cleared;
      endpoint = UnixStream::endpoint(context_->config.listen.path);
    }
    acceptor_.open(endpoint.protocol(), ec);
    if constexpr (kIsTcp) {
      if (!ec) acceptor_.set_option(asio::socket_base::reuse_address(true), ec);
    }
    if (!ec) acceptor_.bind(endpoint, ec);
    if (!ec) bound_ = true;
    if (!ec) acceptor_.listen(asio::socket_base::max_listen_connections, ec);
    if (ec) return Error{Where() + ": cannot listen: " + ec.message()};
    if constexpr (kIsTcp) port_ = acceptor_.local_endpoint(ec).port();
    return Ok{};
  }

  // A socket file left by a process that died is replaced; one a live process accepts on is
  // an error, and so is any other kind of file.
  Status ClearStaleSocketFile() {
    const std::string& path = context_->config.listen.path;
    struct stat info;
    if (::lstat(path.c_str(), &info) != 0) return Ok{};  // nothing there
    if (!S_ISSOCK(info.st_mode)) return Error{Where() + ": " + path + " exists and is no socket"};
    UnixStream::socket probe(io_);
    error_code ec;
    probe.connect(UnixStream::endpoint(path), ec);
    if (!ec) return Error{Where() + ": another process is listening on " + path};
    std::error_code removed;
    std::filesystem::remove(path, removed);
    if (removed) {
      return Error{Where() + ": cannot remove stale " + path + ": " + removed.message()};
    }
    return Ok{};
  }

  void Accept() {
    acceptor_.async_accept(pool_.Next(),
                           [self = this->shared_from_this()](error_code ec, Socket socket) {
                             self->OnAccept(ec, std::move(socket));
                           });
  }

  void OnAccept(error_code ec, Socket socket) {
    if (stopping_ || !acceptor_.is_open()) return EndAccepting();
    if (ec) {  // out of descriptors or the like: pause instead of spinning
      retry_timer_.expires_after(kAcceptRetryDelay);
      retry_timer_.async_wait([self = this->shared_from_this()](error_code) {
        if (self->stopping_) return self->EndAccepting();
        self->Accept();
      });
      return;
    }
    Admit(std::move(socket));
    Accept();
  }

  void Admit(Socket socket) {
    StreamCounters& counters = *context_->counters;
    error_code ignored;
    if constexpr (kIsTcp) {
      error_code ec;
      const tcp::endpoint peer = socket.remote_endpoint(ec);
      if (ec) return;  // the peer is already gone
      const asio::ip::address address = peer.address();
      bool allowed;
      if (address.is_v4()) {
        const auto bytes = address.to_v4().to_bytes();
        allowed = context_->config.Allows(bytes);
      } else {
        const auto bytes = address.to_v6().to_bytes();
        allowed = context_->config.Allows(bytes);
      }
      if (!allowed) {
        counters.Add(ConnectionRejectReason::kNotAllowed);
        socket.close(ignored);  // before a byte is read
        return;
      }
    }
    std::shared_ptr<Connection<Protocol>> connection;
    {
      std::lock_guard<std::mutex> lock(mu_);
      if (connections_.size() < context_->config.max_connections) {
        const uint64_t id = next_id_++;
        connection =
            std::make_shared<Connection<Protocol>>(std::move(socket), this->shared_from_this(), id);
        connections_.emplace(id, connection);
        counters.connections.fetch_add(1, std::memory_order_relaxed);
      }
    }
    if (!connection) {
      counters.Add(ConnectionRejectReason::kTooMany);
      socket.close(ignored);
      return;
    }
    connection->Start();
  }

  void EndAccepting() {
    std::lock_guard<std::mutex> lock(mu_);
    accepting_ = false;
    changed_.notify_all();
  }

  IoPool& pool_;
  asio::io_context& io_;  // the acceptor's context
  const std::shared_ptr<const ListenerContext> context_;
  typename Protocol::acceptor acceptor_;  // its context's thread only, after Start
  asio::steady_timer retry_timer_;        // the same thread
  bool bound_ = false;                    // a unix socket file of ours exists
  std::atomic<uint16_t> port_{0};
  std::atomic<bool> stopping_{false};

  std::mutex mu_;  // guards the members below
  std::condition_variable changed_;
  std::map<uint64_t, std::weak_ptr<Connection<Protocol>>> connections_;
  uint64_t next_id_ = 0;
  bool accepting_ = false;
};

}  // namespace

std::shared_ptr<ListenerCore> MakeStreamSocketListener(
    IoPool& pool, std::shared_ptr<const ListenerContext> context) {
  if (context->config.listen.scheme == ListenScheme::kUnix) {
    return std::make_shared<SocketListener<UnixStream>>(pool, std::move(context));
  }
  return std::make_shared<SocketListener<tcp>>(pool, std::move(context));
}

}  // namespace codedrift
