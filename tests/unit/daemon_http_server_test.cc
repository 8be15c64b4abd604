// HttpServer over real loopback sockets: ephemeral bind, keep-alive, limits, timeouts, stop.
#include <chrono>
#include <memory>
#include <string>
#include <thread>

#include <boost/asio/connect.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/read.hpp>
#include <boost/asio/write.hpp>
#include <boost/beast/core/flat_buffer.hpp>
#include <boost/beast/http.hpp>
#include <gtest/gtest.h>

#include "http_server.h"

namespace codedrift {
namespace {

namespace asio = boost::asio;
namespace http = boost::beast::http;
using tcp = asio::ip::tcp;

constexpr auto kDeadline = std::chrono::seconds(10);

// Runs a server on its own io thread for one test.
class HttpServerTest : public ::testing::Test {
 protected:
  void StartServer(HttpServerOptions options = {}) {
    auto router = std::make_shared<HttpRouter>();
    router->Add("GET", "/metrics", [](const HttpRequest&) {
      HttpResponse response = HttpResponse::Text(200, "codedrift_up 1\n");
      response.content_type = "text/plain; version=0.0.4; charset=utf-8";
      return response;
    });
    router->Add("POST", "/echo", [](const HttpRequest& request) {
      return HttpResponse::Text(200,
                                std::string(request.Header("authorization")) + "|" + request.body);
    });
    options.host = "127.0.0.1";
    options.port = 0;
    server_ = std::make_unique<HttpServer>(io_, router, options);
    const Status started = server_->Start();
    ASSERT_TRUE(started.ok()) << started.error().message;
    thread_ = std::thread([this] { io_.run(); });
  }

  void TearDown() override {
    if (server_) {
      server_->Stop();
      EXPECT_TRUE(server_->WaitStopped(std::chrono::steady_clock::now() + kDeadline));
    }
    if (thread_.joinable()) thread_.join();  // run() returns once no work is left
    server_.reset();
  }

  tcp::socket Connect() {
    tcp::socket socket(client_io_);
    socket.connect(tcp::endpoint(asio::ip::make_address("127.0.0.1"), server_->bound_port()));
    return socket;
  }

  // Reads one response; the test fails if the connection ends first.
  http::response<http::string_body> ReadResponse(tcp::socket& socket) {
    http::response<http::string_body> response;
    boost::system::error_code ec;
    http::read(socket, buffer_, response, ec);
    EXPECT_FALSE(ec) << ec.message();
    return response;
  }

  // True when the server closed the connection (read ends with EOF or reset, no more bytes).
  static bool ReadsEndOfStream(tcp::socket& socket) {
    char byte;
    boost::system::error_code ec;
    const size_t n = asio::read(socket, asio::buffer(&byte, 1), ec);
    return n == 0 && (ec == asio::error::eof || ec == asio::error::connection_reset);
  }

  asio::io_context io_;
  asio::io_context client_io_;
  std::unique_ptr<HttpServer> server_;
  std::thread thread_;
  boost::beast::flat_buffer buffer_;
};

TEST_F(HttpServerTest, BindsAnEphemeralPortAndServesMetrics) {
  StartServer();
  EXPECT_NE(server_->bound_port(), 0);
  tcp::socket socket = Connect();
  asio::write(socket, asio::buffer(std::string("GET /metrics HTTP/1.1\r\nHost: x\r\n\r\n")));
  const auto response = ReadResponse(socket);
  EXPECT_EQ(response.result_int(), 200);
  EXPECT_EQ(response[http::field::content_type], "text/plain; version=0.0.4; charset=utf-8");
  EXPECT_EQ(response.body(), "codedrift_up 1\n");
}

// HTTP/1.1 connections persist unless a side says "Connection: close" (RFC 9112 §9.3).
TEST_F(HttpServerTest, KeepAliveServesSeveralRequestsOnOneConnection) {
  StartServer();
  tcp::socket socket = Connect();
  asio::write(socket, asio::buffer(std::string(
                          "GET /metrics HTTP/1.1\r\nHost: x\r\n\r\n"
                          "POST /echo HTTP/1.1\r\nHost: x\r\nAuthorization: Bearer t0k\r\n"
                          "Content-Length: 5\r\n\r\nhello"
                          "GET /nope HTTP/1.1\r\nHost: x\r\nConnection: close\r\n\r\n")));
  EXPECT_EQ(ReadResponse(socket).result_int(), 200);
  const auto echo = ReadResponse(socket);
  EXPECT_EQ(echo.body(), "Bearer t0k|hello");
  const auto missing = ReadResponse(socket);
  EXPECT_EQ(missing.result_int(), 404);
  EXPECT_FALSE(missing.keep_alive());
  EXPECT_TRUE(ReadsEndOfStream(socket));
}

// A HEAD response carries the GET headers and no body (RFC 9110 §9.3.2).
TEST_F(HttpServerTest, HeadHasLengthButNoBody) {
  StartServer();
  tcp::socket socket = Connect();
  asio::write(socket, asio::buffer(std::string("HEAD /metrics HTTP/1.1\r\nHost: x\r\n\r\n")));
  http::response_parser<http::empty_body> parser;
  parser.skip(true);  // a response to HEAD has no body whatever Content-Length says
  boost::system::error_code ec;
  http::read(socket, buffer_, parser, ec);
  ASSERT_FALSE(ec) << ec.message();
  EXPECT_EQ(parser.get().result_int(), 200);
  EXPECT_EQ(parser.get()[http::field::content_length], "15");
}

// 431 for oversized header fields (RFC 6585 §5), then the connection closes.
TEST_F(HttpServerTest, OversizedHeaderIs431) {
  StartServer();
  tcp::socket socket = Connect();
  const std::string request =
      "GET /metrics HTTP/1.1\r\nHost: x\r\nX-Filler: " + std::string(9000, 'a') + "\r\n\r\n";
  asio::write(socket, asio::buffer(request));
  const auto response = ReadResponse(socket);
  EXPECT_EQ(response.result_int(), 431);
  EXPECT_FALSE(response.keep_alive());
  EXPECT_TRUE(ReadsEndOfStream(socket));
}

// 413 for a body over the limit (RFC 9110 §15.5.14), decided from Content-Length alone.
TEST_F(HttpServerTest, OversizedBodyIs413) {
  StartServer();
  tcp::socket socket = Connect();
  asio::write(
      socket,
      asio::buffer(std::string("POST /echo HTTP/1.1\r\nHost: x\r\nContent-Length: 65537\r\n\r\n")));
  const auto response = ReadResponse(socket);
  EXPECT_EQ(response.result_int(), 413);
  EXPECT_TRUE(ReadsEndOfStream(socket));
}

TEST_F(HttpServerTest, BodyAtTheLimitIsAccepted) {
  StartServer();
  tcp::socket socket = Connect();
  const std::string body(65536, 'b');
  asio::write(
      socket,
      asio::buffer("POST /echo HTTP/1.1\r\nHost: x\r\nContent-Length: 65536\r\n\r\n" + body));
  const auto response = ReadResponse(socket);
  EXPECT_EQ(response.result_int(), 200);
  EXPECT_EQ(response.body(), "|" + body);
}

TEST_F(HttpServerTest, MalformedRequestIs400) {
  StartServer();
  tcp::socket socket = Connect();
  asio::write(socket, asio::buffer(std::string("GET /metrics HTTP/9z\r\n\r\n")));
  const auto response = ReadResponse(socket);
  EXPECT_EQ(response.result_int(), 400);
  EXPECT_TRUE(ReadsEndOfStream(socket));
}

TEST_F(HttpServerTest, PathTrickOverTheWireIs404) {
  StartServer();
  tcp::socket socket = Connect();
  asio::write(
      socket,
      asio::buffer(std::string("GET /api/v1/models/%2e%2e/%2e%2e HTTP/1.1\r\nHost: x\r\n\r\n")));
  EXPECT_EQ(ReadResponse(socket).result_int(), 404);
}

TEST_F(HttpServerTest, SilentClientIsClosedAfterTheTimeout) {
  HttpServerOptions options;
  options.timeout = std::chrono::milliseconds(200);
  StartServer(options);
  tcp::socket socket = Connect();
  asio::write(socket, asio::buffer(std::string("GET /metrics HTTP/1.1\r\n")));  // never ends
  EXPECT_TRUE(ReadsEndOfStream(socket));
}

TEST_F(HttpServerTest, ConnectionsBeyondTheLimitAreClosed) {
  HttpServerOptions options;
  options.max_connections = 1;
  StartServer(options);
  tcp::socket first = Connect();
  asio::write(first, asio::buffer(std::string("GET /metrics HTTP/1.1\r\nHost: x\r\n\r\n")));
  EXPECT_EQ(ReadResponse(first).result_int(), 200);  // the first connection is registered
  tcp::socket second = Connect();
  EXPECT_TRUE(ReadsEndOfStream(second));
  // The first still works.
  asio::write(first, asio::buffer(std::string("GET /metrics HTTP/1.1\r\nHost: x\r\n\r\n")));
  EXPECT_EQ(ReadResponse(first).result_int(), 200);
}

TEST_F(HttpServerTest, StopClosesIdleConnectionsAndCompletes) {
  StartServer();
  tcp::socket socket = Connect();
  asio::write(socket, asio::buffer(std::string("GET /metrics HTTP/1.1\r\nHost: x\r\n\r\n")));
  EXPECT_EQ(ReadResponse(socket).result_int(), 200);
  server_->Stop();
  EXPECT_TRUE(server_->WaitStopped(std::chrono::steady_clock::now() + kDeadline));
  EXPECT_TRUE(ReadsEndOfStream(socket));
  boost::system::error_code ec;
  tcp::socket late(client_io_);
  late.connect(tcp::endpoint(asio::ip::make_address("127.0.0.1"), server_->bound_port()), ec);
  EXPECT_EQ(ec, asio::error::connection_refused);
}

TEST(HttpServer, BusyPortIsAnErrorValue) {
  asio::io_context io;
  auto router = std::make_shared<HttpRouter>();
  HttpServerOptions options;
  options.port = 0;
  HttpServer first(io, router, options);
  ASSERT_TRUE(first.Start().ok());
  options.port = first.bound_port();
  HttpServer second(io, router, options);
  const Status status = second.Start();
  ASSERT_FALSE(status.ok());
  EXPECT_NE(status.error().message.find("127.0.0.1:" + std::to_string(options.port)),
            std::string::npos)
      << status.error().message;
}

}  // namespace
}  // namespace codedrift
