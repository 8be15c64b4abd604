#include "http_server.h"

#include <atomic>
#include <condition_variable>
#include <exception>
#include <map>
#include <mutex>
#include <optional>
#include <vector>

#include <boost/asio/dispatch.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/post.hpp>
#include <boost/asio/steady_timer.hpp>
#include <boost/asio/strand.hpp>
#include <boost/beast/core.hpp>
#include <boost/beast/http.hpp>

namespace codedrift {
namespace {

namespace asio = boost::asio;
namespace beast = boost::beast;
namespace http = beast::http;
using tcp = asio::ip::tcp;

// After an error response the peer may still be sending; reading (and discarding) a little
// before closing keeps the kernel from answering with a reset that would destroy our response.
constexpr size_t kMaxDrainBytes = 1 << 20;
constexpr auto kDrainTimeout = std::chrono::seconds(1);
// When accept fails for lack of resources (EMFILE), retry after a pause instead of spinning.
constexpr auto kAcceptRetryDelay = std::chrono::milliseconds(100);

bool IsParseError(const beast::error_code& ec) {
  return ec.category() == http::make_error_code(http::error::bad_target).category() &&
         ec != http::error::end_of_stream && ec != http::error::partial_message;
}

std::string Lower(beast::string_view s) {
  std::string out(s.data(), s.size());
  for (char& c : out) {
    if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
  }
  return out;
}

HttpRequest ToRequest(http::request<http::string_body>&& req) {
  HttpRequest out;
  out.method = std::string(req.method_string());
  out.target = std::string(req.target());
  const size_t question = out.target.find('?');
  out.path = out.target.substr(0, question);
  if (question != std::string::npos) out.query = out.target.substr(question + 1);
  for (const auto& field : req) {
    std::string& value = out.headers[Lower(field.name_string())];
    if (!value.empty()) value += ", ";
    value.append(field.value().data(), field.value().size());
  }
  out.body = std::move(req.body());
  return out;
}

}  // namespace

class HttpSession;

struct HttpServer::Impl : std::enable_shared_from_this<HttpServer::Impl> {
  Impl(asio::io_context& io_context, std::shared_ptr<const HttpRouter> http_router,
       HttpServerOptions server_options)
      : io(io_context),
        router(std::move(http_router)),
        options(std::move(server_options)),
        acceptor(asio::make_strand(io_context)),
        retry_timer(acceptor.get_executor()) {}

  void Accept();
  void OnAccept(beast::error_code ec, tcp::socket socket);
  void EndAccepting();
  void Forget(uint64_t id);

  asio::io_context& io;
  const std::shared_ptr<const HttpRouter> router;
  const HttpServerOptions options;
  tcp::acceptor acceptor;          // used on its strand only (after Start)
  asio::steady_timer retry_timer;  // same strand
  std::atomic<uint16_t> port{0};
  std::atomic<bool> stopping{false};

  std::mutex mu;  // guards the members below
  std::condition_variable changed;
  std::map<uint64_t, std::weak_ptr<HttpSession>> sessions;
  uint64_t next_id = 0;
  bool accepting = false;
};

// One connection: reads requests one at a time, answers each through the router, keeps the
// connection alive while the client asks for it. All work runs on the connection's strand.
class HttpSession : public std::enable_shared_from_this<HttpSession> {
 public:
  HttpSession(tcp::socket socket, std::shared_ptr<HttpServer::Impl> server, uint64_t id)
      : stream_(std::move(socket)), server_(std::move(server)), id_(id) {}
  ~HttpSession() { server_->Forget(id_); }

  void Start() {
    asio::dispatch(stream_.get_executor(),
                   beast::bind_front_handler(&HttpSession::Read, shared_from_this()));
  }

  // The server stops: a connection waiting for a request closes now; one answering a request
  // closes after its response (OnWrite sees `stopping`).
  void Stop() {
    asio::post(stream_.get_executor(), [self = shared_from_this()] {
      if (self->waiting_) self->stream_.cancel();
    });
  }

 private:
  void Read() {
    if (server_->stopping) return Close();
    parser_.emplace();
    parser_->header_limit(static_cast<std::uint32_t>(server_->options.max_header_bytes));
    parser_->body_limit(server_->options.max_body_bytes);
    waiting_ = true;
    stream_.expires_after(server_->options.timeout);
    http::async_read(stream_, buffer_, *parser_,
                     beast::bind_front_handler(&HttpSession::OnRead, shared_from_this()));
  }

  void OnRead(beast::error_code ec, size_t /*bytes*/) {
    waiting_ = false;
    if (ec == http::error::header_limit) {
      return Fail(431, "request header fields too large\n");
    }
    if (ec == http::error::body_limit) return Fail(413, "request body too large\n");
    if (ec && IsParseError(ec)) return Fail(400, "bad request: " + ec.message() + "\n");
    if (ec) return Close();  // end of stream, timeout, reset, stop
    const unsigned version = parser_->get().version();
    const bool head = parser_->get().method() == http::verb::head;
    const bool keep_alive = parser_->get().keep_alive() && !server_->stopping;
    HttpResponse response;
    try {
      response = server_->router->Route(ToRequest(parser_->release()));
    } catch (const std::exception& e) {  // nothing may escape into the io_context
      response = HttpResponse::Text(500, std::string("internal error: ") + e.what() + "\n");
    }
    Write(std::move(response), version, head, keep_alive, /*drain=*/false);
  }

  // Answers an unreadable request, then closes (the stream may be mid-request).
  void Fail(int status, std::string body) {
    Write(HttpResponse::Text(status, std::move(body)), 11, false, false, /*drain=*/true);
  }

  void Write(HttpResponse in, unsigned version, bool head, bool keep_alive, bool drain) {
    response_.emplace(static_cast<http::status>(in.status), version);
    response_->set(http::field::server, "codedriftd");
    response_->set(http::field::content_type, in.content_type);
    for (const auto& [name, value] : in.headers) response_->set(name, value);
    response_->keep_alive(keep_alive);
    response_->body() = std::move(in.body);
    response_->prepare_payload();
    if (head) response_->body().clear();  // HEAD: Content-Length of the GET body, no body
    stream_.expires_after(server_->options.timeout);
    http::async_write(
        stream_, *response_,
        beast::bind_front_handler(&HttpSession::OnWrite, shared_from_this(), keep_alive, drain));
  }

  void OnWrite(bool keep_alive, bool drain, beast::error_code ec, size_t /*bytes*/) {
    response_.reset();
    if (ec) return Close();
    if (drain) return Drain();
    if (!keep_alive || server_->stopping) return Close();
    Read();
  }

  void Drain() {
    beast::error_code ignored;
    stream_.socket().shutdown(tcp::socket::shutdown_send, ignored);
    stream_.expires_after(kDrainTimeout);
    ReadAndDiscard();
  }

  void ReadAndDiscard() {
    buffer_.consume(buffer_.size());
    stream_.async_read_some(buffer_.prepare(4096),
                            [self = shared_from_this()](beast::error_code ec, size_t n) {
                              self->drained_ += n;
                              if (ec || self->drained_ > kMaxDrainBytes) return self->Close();
                              self->ReadAndDiscard();
                            });
  }

  void Close() {
    beast::error_code ignored;
    stream_.socket().shutdown(tcp::socket::shutdown_both, ignored);
    stream_.close();
  }

  beast::tcp_stream stream_;
  beast::flat_buffer buffer_;
  std::optional<http::request_parser<http::string_body>> parser_;
  std::optional<http::response<http::string_body>> response_;  // alive while being written
  const std::shared_ptr<HttpServer::Impl> server_;
  const uint64_t id_;
  bool waiting_ = false;  // a read of the next request is pending
  size_t drained_ = 0;
};

void HttpServer::Impl::Accept() {
  acceptor.async_accept(asio::make_strand(io),
                        beast::bind_front_handler(&Impl::OnAccept, shared_from_this()));
}

void HttpServer::Impl::OnAccept(beast::error_code ec, tcp::socket socket) {
  if (stopping || !acceptor.is_open()) return EndAccepting();
  if (ec) {
    retry_timer.expires_after(kAcceptRetryDelay);
    retry_timer.async_wait([self = shared_from_this()](beast::error_code) {
      if (self->stopping) return self->EndAccepting();
      self->Accept();
    });
    return;
  }
  std::shared_ptr<HttpSession> session;
  {
    std::lock_guard<std::mutex> lock(mu);
    if (sessions.size() < options.max_connections) {
      const uint64_t id = next_id++;
      session = std::make_shared<HttpSession>(std::move(socket), shared_from_this(), id);
      sessions.emplace(id, session);
    }
  }
  if (session) {
    session->Start();
  } else {
    beast::error_code ignored;
    socket.close(ignored);  // over max_connections: refuse at once
  }
  Accept();
}

void HttpServer::Impl::EndAccepting() {
  std::lock_guard<std::mutex> lock(mu);
  accepting = false;
  changed.notify_all();
}

void HttpServer::Impl::Forget(uint64_t id) {
  std::lock_guard<std::mutex> lock(mu);
  sessions.erase(id);
  changed.notify_all();
}

HttpServer::HttpServer(asio::io_context& io, std::shared_ptr<const HttpRouter> router,
                       HttpServerOptions options)
    : impl_(std::make_shared<Impl>(io, std::move(router), std::move(options))) {}

HttpServer::~HttpServer() { Stop(); }

Status HttpServer::Start() {
  Impl& s = *impl_;
  if (s.stopping) return Error{"http: the server was stopped"};
  const std::string where = s.options.host + ":" + std::to_string(s.options.port);
  beast::error_code ec;
  tcp::endpoint endpoint;
  const asio::ip::address address = asio::ip::make_address(s.options.host, ec);
  if (!ec) {
    endpoint = tcp::endpoint(address, s.options.port);
  } else {
    tcp::resolver resolver(s.io);
    const auto results = resolver.resolve(s.options.host, std::to_string(s.options.port), ec);
    if (ec || results.empty()) {
      return Error{"http: cannot resolve " + s.options.host + ": " + ec.message()};
    }
    endpoint = results.begin()->endpoint();
  }
  s.acceptor.open(endpoint.protocol(), ec);
  if (!ec) s.acceptor.set_option(asio::socket_base::reuse_address(true), ec);
  if (!ec) s.acceptor.bind(endpoint, ec);
  if (!ec) s.acceptor.listen(asio::socket_base::max_listen_connections, ec);
  if (ec) {
    beast::error_code ignored;
    s.acceptor.close(ignored);
    return Error{"http: cannot listen on " + where + ": " + ec.message()};
  }
  s.port = s.acceptor.local_endpoint(ec).port();
  {
    std::lock_guard<std::mutex> lock(s.mu);
    s.accepting = true;
  }
  asio::post(s.acceptor.get_executor(), [impl = impl_] { impl->Accept(); });
  return Ok{};
}

uint16_t HttpServer::bound_port() const { return impl_->port; }

void HttpServer::Stop() {
  if (impl_->stopping.exchange(true)) return;
  asio::post(impl_->acceptor.get_executor(), [impl = impl_] {
    beast::error_code ignored;
    impl->acceptor.close(ignored);  // a pending accept completes with operation_aborted
    impl->retry_timer.cancel();
  });
  // Lock the sessions outside the mutex's scope: dropping the last reference runs
  // ~HttpSession, which takes the mutex itself.
  std::vector<std::shared_ptr<HttpSession>> live;
  {
    std::lock_guard<std::mutex> lock(impl_->mu);
    for (auto& [id, weak] : impl_->sessions) {
      if (auto session = weak.lock()) live.push_back(std::move(session));
    }
  }
  for (const auto& session : live) session->Stop();
}

bool HttpServer::WaitStopped(std::chrono::steady_clock::time_point deadline) {
  std::unique_lock<std::mutex> lock(impl_->mu);
  return impl_->changed.wait_until(lock, deadline,
                                   [&] { return !impl_->accepting && impl_->sessions.empty(); });
}

}  // namespace codedrift
