// Test helper: a webhook receiver on 127.0.0.1 that a test scripts (statuses, withheld
// answers) and inspects (what arrived), for webhook_sink_test.cc.
#pragma once

#include <chrono>
#include <condition_variable>
#include <cstdint>
#include <deque>
#include <memory>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/post.hpp>
#include <boost/beast/core/flat_buffer.hpp>
#include <boost/beast/http.hpp>

namespace codedrift::webhook_test {

namespace asio = boost::asio;
namespace http = boost::beast::http;
using tcp = asio::ip::tcp;

// A bound on waits for events that should come within milliseconds; never a pause.
inline constexpr auto kDeadline = std::chrono::seconds(20);

inline std::chrono::steady_clock::time_point Deadline() {
  return std::chrono::steady_clock::now() + kDeadline;
}

struct ReceivedRequest {
  std::string method;
  std::string target;
  std::string host;
  std::string content_type;
  std::string user_agent;
  std::string delivery;
  std::string body;
};

// A webhook receiver on 127.0.0.1 with its own io thread: records every request, answers
// with the next scripted status (200 once the script is used up), or withholds all answers
// between Hold() and Release().
class Receiver {
 public:
  explicit Receiver(uint16_t port = 0) : acceptor_(io_) {
    const tcp::endpoint endpoint(asio::ip::make_address("127.0.0.1"), port);
    acceptor_.open(endpoint.protocol());
    acceptor_.set_option(tcp::acceptor::reuse_address(true));
    acceptor_.bind(endpoint);
    acceptor_.listen();
    port_ = acceptor_.local_endpoint().port();
    Accept();
    thread_ = std::thread([this] { io_.run(); });
  }
  ~Receiver() {
    io_.stop();
    thread_.join();
  }

  uint16_t port() const { return port_; }

  void Script(std::deque<unsigned> statuses) {
    std::lock_guard lock(mu_);
    script_ = std::move(statuses);
  }
  void Hold() {
    std::lock_guard lock(mu_);
    hold_ = true;
  }
  // Answers the withheld requests with `status` and stops withholding.
  void Release(unsigned status) {
    asio::post(io_, [this, status] {
      std::vector<std::shared_ptr<Connection>> held;
      {
        std::lock_guard lock(mu_);
        hold_ = false;
        held.swap(held_);
      }
      for (auto& connection : held) Respond(connection, status);
    });
  }

  bool WaitForRequests(size_t count) {
    std::unique_lock lock(mu_);
    return arrived_.wait_until(lock, Deadline(), [&] { return received_.size() >= count; });
  }
  std::vector<ReceivedRequest> received() const {
    std::lock_guard lock(mu_);
    return received_;
  }
  std::vector<std::string> deliveries() const {
    std::vector<std::string> keys;
    for (const auto& request : received()) keys.push_back(request.delivery);
    return keys;
  }

 private:
  struct Connection {
    explicit Connection(tcp::socket s) : socket(std::move(s)) {}
    tcp::socket socket;
    boost::beast::flat_buffer buffer;
    http::request<http::string_body> request;
    http::response<http::string_body> response;
  };

  void Accept() {
    acceptor_.async_accept([this](boost::system::error_code ec, tcp::socket socket) {
      if (ec) return;
      auto connection = std::make_shared<Connection>(std::move(socket));
      http::async_read(connection->socket, connection->buffer, connection->request,
                       [this, connection](boost::system::error_code read_error, size_t) {
                         if (!read_error) OnRequest(connection);
                       });
      Accept();
    });
  }

  void OnRequest(const std::shared_ptr<Connection>& connection) {
    const auto& request = connection->request;
    unsigned status = 200;
    bool hold = false;
    {
      std::lock_guard lock(mu_);
      received_.push_back({std::string(request.method_string()), std::string(request.target()),
                           std::string(request[http::field::host]),
                           std::string(request[http::field::content_type]),
                           std::string(request[http::field::user_agent]),
                           std::string(request["X-Codedrift-Delivery"]), request.body()});
      hold = hold_;
      if (hold) {
        held_.push_back(connection);
      } else if (!script_.empty()) {
        status = script_.front();
        script_.pop_front();
      }
    }
    arrived_.notify_all();
    if (!hold) Respond(connection, status);
  }

  static void Respond(const std::shared_ptr<Connection>& connection, unsigned status) {
    connection->response = {static_cast<http::status>(status), 11};
    connection->response.body() = "noted\n";
    connection->response.keep_alive(false);
    connection->response.prepare_payload();
    http::async_write(connection->socket, connection->response,
                      [connection](boost::system::error_code, size_t) {
                        boost::system::error_code ignored;
                        connection->socket.close(ignored);
                      });
  }

  asio::io_context io_;
  tcp::acceptor acceptor_;
  uint16_t port_ = 0;
  std::thread thread_;
  mutable std::mutex mu_;  // guards the members below
  std::condition_variable arrived_;
  std::vector<ReceivedRequest> received_;
  std::deque<unsigned> script_;
  bool hold_ = false;
  std::vector<std::shared_ptr<Connection>> held_;
};

// A loopback port nothing listens on (bound, then closed): connecting to it is refused.
inline uint16_t ClosedPort() {
  asio::io_context io;
  tcp::acceptor acceptor(io, tcp::endpoint(asio::ip::make_address("127.0.0.1"), 0));
  return acceptor.local_endpoint().port();
}

}  // namespace codedrift::webhook_test
