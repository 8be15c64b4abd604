// HttpServer: the daemon's one HTTP/1.1 endpoint (metrics, JSON API, status page), serving an
// HttpRouter over Boost.Beast. Beast and Asio stay inside http_server.cc.
#pragma once

#include <chrono>
#include <cstddef>
#include <cstdint>
#include <memory>
#include <string>

#include "codedrift/result.h"

#include "http_router.h"

namespace boost::asio {
class io_context;
}  // namespace boost::asio

namespace codedrift {

struct HttpServerOptions {
  std::string host = "127.0.0.1";  // IP literal (IPv6 without brackets) or a resolvable name
  uint16_t port = 7070;            // 0: the system picks a free port (see bound_port())
  // Each request must arrive, and each response must leave, within this time; a slow or
  // silent client is closed after it. Also bounds how long an idle keep-alive connection lives.
  std::chrono::milliseconds timeout{30000};
  size_t max_header_bytes = 8192;  // request line and headers; over it: 431, then close
  size_t max_body_bytes = 65536;   // over it: 413, then close
  size_t max_connections = 64;     // beyond it new connections are closed at once
};

// Serves one router on one address. Asynchronous on the caller's io_context, which may run
// on several threads (each connection is a strand). Start, Stop and WaitStopped are
// thread-safe; handlers run on io threads and must be thread-safe if the io_context has more
// than one. Lifetime: connections keep the shared state alive, so destroying the server while
// the io_context still runs is safe (it stops first); destroy it before the io_context.
class HttpServer {
 public:
  HttpServer(boost::asio::io_context& io, std::shared_ptr<const HttpRouter> router,
             HttpServerOptions options);
  ~HttpServer();
  HttpServer(const HttpServer&) = delete;
  HttpServer& operator=(const HttpServer&) = delete;

  // Binds and listens, then accepts asynchronously. Errors name the address and the reason.
  Status Start();
  // The port actually bound (the ephemeral one when options.port was 0); 0 before Start.
  uint16_t bound_port() const;

  // Stops accepting and closes connections that wait for a request; a request being answered
  // finishes its response first, then its connection closes. Returns at once.
  void Stop();
  // After Stop: waits until every connection is closed or the deadline passes (false). Must
  // not be called from an io thread of this server.
  bool WaitStopped(std::chrono::steady_clock::time_point deadline);

 private:
  friend class HttpSession;  // a connection, defined in http_server.cc
  struct Impl;
  std::shared_ptr<Impl> impl_;
};

}  // namespace codedrift
