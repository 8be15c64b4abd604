#include "synth_output.h"

#include <cerrno>
#include <cstdio>
#include <cstring>

#include <boost/asio/connect.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/ip/udp.hpp>
#include <boost/asio/write.hpp>

namespace codedrift::cli {
namespace {

namespace asio = boost::asio;

constexpr size_t kBatchBytes = size_t{64} << 10;  // one cache-friendly write at a time
constexpr size_t kMaxDatagramBytes = 65507;       // IPv4 UDP payload limit

// stdout or a file, through stdio's buffer.
class FileOutput final : public RecordOutput {
 public:
  FileOutput(std::FILE* file, std::string name, bool owned)
      : file_(file), name_(std::move(name)), owned_(owned) {}
  ~FileOutput() override {
    if (owned_) std::fclose(file_);
  }

  Result<size_t> Write(std::string_view record) override {
    if (std::fwrite(record.data(), 1, record.size(), file_) != record.size()) return Failed();
    return record.size();
  }
  Status Flush() override {
    if (std::fflush(file_) != 0) return Failed();
    return Ok{};
  }
  bool is_socket() const override { return false; }
  bool reader_gone() const override { return reader_gone_; }
  std::string name() const override { return name_; }

 private:
  Error Failed() {
    reader_gone_ = errno == EPIPE;
    return Error{name_ + ": write failed: " + std::strerror(errno)};
  }

  std::FILE* file_;
  std::string name_;
  bool owned_;
  bool reader_gone_ = false;
};

class TcpOutput final : public RecordOutput {
 public:
  TcpOutput(std::unique_ptr<asio::io_context> io, asio::ip::tcp::socket socket, std::string name)
      : io_(std::move(io)), socket_(std::move(socket)), name_(std::move(name)) {}

  Result<size_t> Write(std::string_view record) override {
    pending_.append(record);
    if (pending_.size() >= kBatchBytes) {
      Status flushed = Flush();
      if (!flushed.ok()) return flushed.error();
    }
    return record.size();
  }
  Status Flush() override {
    if (pending_.empty()) return Ok{};
    boost::system::error_code error;
    asio::write(socket_, asio::buffer(pending_), error);
    if (error) return Error{name_ + ": send failed: " + error.message()};
    pending_.clear();
    return Ok{};
  }
  bool is_socket() const override { return true; }
  std::string name() const override { return name_; }

 private:
  std::unique_ptr<asio::io_context> io_;  // outlives the socket (declared first)
  asio::ip::tcp::socket socket_;
  std::string name_;
  std::string pending_;
};

class UdpOutput final : public RecordOutput {
 public:
  UdpOutput(std::unique_ptr<asio::io_context> io, asio::ip::udp::socket socket,
            asio::ip::udp::endpoint endpoint, std::string name)
      : io_(std::move(io)),
        socket_(std::move(socket)),
        endpoint_(std::move(endpoint)),
        name_(std::move(name)) {}

  Result<size_t> Write(std::string_view record) override {
    if (record.ends_with('\n')) record.remove_suffix(1);
    if (record.size() > kMaxDatagramBytes) {
      return Error{name_ + ": a record of " + std::to_string(record.size()) +
                   " bytes does not fit in a datagram"};
    }
    boost::system::error_code error;
    socket_.send_to(asio::buffer(record.data(), record.size()), endpoint_, 0, error);
    if (error) return Error{name_ + ": send failed: " + error.message()};
    return record.size();
  }
  Status Flush() override { return Ok{}; }
  bool is_socket() const override { return true; }
  std::string name() const override { return name_; }

 private:
  std::unique_ptr<asio::io_context> io_;
  asio::ip::udp::socket socket_;
  asio::ip::udp::endpoint endpoint_;
  std::string name_;
};

Result<std::unique_ptr<RecordOutput>> Connect(const ReplayTarget& target) {
  auto io = std::make_unique<asio::io_context>();
  const std::string name = target.ToString();
  boost::system::error_code error;
  if (target.udp) {
    asio::ip::udp::resolver resolver(*io);
    const auto endpoints = resolver.resolve(target.host, target.port, error);
    if (error || endpoints.empty()) return Error{name + ": cannot resolve: " + error.message()};
    const asio::ip::udp::endpoint endpoint = endpoints.begin()->endpoint();
    asio::ip::udp::socket socket(*io);
    socket.open(endpoint.protocol(), error);
    if (error) return Error{name + ": " + error.message()};
    return std::unique_ptr<RecordOutput>(
        std::make_unique<UdpOutput>(std::move(io), std::move(socket), endpoint, name));
  }
  asio::ip::tcp::resolver resolver(*io);
  const auto endpoints = resolver.resolve(target.host, target.port, error);
  if (error) return Error{name + ": cannot resolve: " + error.message()};
  asio::ip::tcp::socket socket(*io);
  asio::connect(socket, endpoints, error);
  if (error) return Error{name + ": cannot connect: " + error.message()};
  socket.set_option(asio::ip::tcp::no_delay(true), error);  // paced records leave at once
  return std::unique_ptr<RecordOutput>(
      std::make_unique<TcpOutput>(std::move(io), std::move(socket), name));
}

}  // namespace

Result<OutputAddress> ParseOutputAddress(const std::string& to) {
  OutputAddress address;
  if (to == "-") return address;
  if (to.starts_with("tcp://") || to.starts_with("udp://")) {
    Result<ReplayTarget> target = ParseReplayTarget(to);
    if (!target.ok()) return Error{target.error().message + ", a file path or -"};
    address.kind = OutputAddress::Kind::kSocket;
    address.target = std::move(target).value();
    return address;
  }
  if (to.empty() || to.find("://") != std::string::npos) {
    return Error{"--to '" + to + "': expected tcp://HOST:PORT, udp://HOST:PORT, a file path or -"};
  }
  address.kind = OutputAddress::Kind::kFile;
  address.path = to;
  return address;
}

Result<std::unique_ptr<RecordOutput>> OpenRecordOutput(const OutputAddress& address) {
  switch (address.kind) {
    case OutputAddress::Kind::kStdout:
      return std::unique_ptr<RecordOutput>(
          std::make_unique<FileOutput>(stdout, "standard output", false));
    case OutputAddress::Kind::kFile: {
      std::FILE* file = std::fopen(address.path.c_str(), "wb");
      if (file == nullptr) {
        return Error{address.path + ": cannot create: " + std::strerror(errno)};
      }
      return std::unique_ptr<RecordOutput>(std::make_unique<FileOutput>(file, address.path, true));
    }
    case OutputAddress::Kind::kSocket:
      return Connect(address.target);
  }
  return Error{"unreachable"};
}

}  // namespace codedrift::cli
