// `codedrift replay`: feeds a capture to a daemon (or anything listening), lines over TCP or
// one datagram per line over UDP, optionally paced at a fixed record rate.
#include <chrono>
#include <iostream>
#include <memory>
#include <thread>

#include <boost/asio/connect.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/ip/udp.hpp>
#include <boost/asio/write.hpp>

#include "capture_reader.h"
#include "cli_common.h"
#include "replay_target.h"
#include "text_table.h"

namespace codedrift::cli {
namespace {

namespace asio = boost::asio;
using Clock = std::chrono::steady_clock;

constexpr char kCommand[] = "replay";
constexpr size_t kTcpBatchBytes = size_t{64} << 10;
constexpr size_t kMaxDatagramBytes = 65507;  // IPv4 UDP payload limit

struct ReplayOptions {
  std::vector<std::string> files;
  std::string to;
  double rate = 0;
};

// Holds record i back until start + i / rate; sleeps (never spins) when ahead of schedule.
class Pacer {
 public:
  explicit Pacer(double rate) : rate_(rate), start_(Clock::now()) {}
  // True when record `index` is not due yet; `due` is then when it is.
  bool Early(uint64_t index, Clock::time_point& due) const {
    if (rate_ <= 0) return false;
    due = start_ + std::chrono::duration_cast<Clock::duration>(
                       std::chrono::duration<double>(static_cast<double>(index) / rate_));
    return Clock::now() < due;
  }

 private:
  double rate_;
  Clock::time_point start_;
};

// The two transports behind one small interface.
class Sink {
 public:
  virtual ~Sink() = default;
  // Sends (or queues) one line, '\n' included when the file had it. Returns bytes sent.
  virtual Result<size_t> Send(std::string_view line) = 0;
  virtual Status Flush() = 0;
};

class TcpSink final : public Sink {
 public:
  explicit TcpSink(asio::ip::tcp::socket socket) : socket_(std::move(socket)) {}

  Result<size_t> Send(std::string_view line) override {
    pending_.append(line);
    // Lines go out as lines: an unterminated last line gets its '\n' so it is a record.
    if (!line.ends_with('\n')) pending_ += '\n';
    const size_t bytes = line.size() + (line.ends_with('\n') ? 0 : 1);
    if (pending_.size() >= kTcpBatchBytes) {
      Status flushed = Flush();
      if (!flushed.ok()) return flushed.error();
    }
    return bytes;
  }

  Status Flush() override {
    if (pending_.empty()) return Ok{};
    boost::system::error_code error;
    asio::write(socket_, asio::buffer(pending_), error);
    if (error) return Error{"send failed: " + error.message()};
    pending_.clear();
    return Ok{};
  }

 private:
  asio::ip::tcp::socket socket_;
  std::string pending_;
};

class UdpSink final : public Sink {
 public:
  UdpSink(asio::ip::udp::socket socket, asio::ip::udp::endpoint endpoint)
      : socket_(std::move(socket)), endpoint_(std::move(endpoint)) {}

  Result<size_t> Send(std::string_view line) override {
    if (line.ends_with('\n')) line.remove_suffix(1);
    if (line.size() > kMaxDatagramBytes) {
      ++too_long_;
      return size_t{0};
    }
    boost::system::error_code error;
    socket_.send_to(asio::buffer(line.data(), line.size()), endpoint_, 0, error);
    if (error) return Error{"send failed: " + error.message()};
    return line.size();
  }
  Status Flush() override { return Ok{}; }
  uint64_t too_long() const { return too_long_; }

 private:
  asio::ip::udp::socket socket_;
  asio::ip::udp::endpoint endpoint_;
  uint64_t too_long_ = 0;
};

Result<std::unique_ptr<Sink>> Connect(asio::io_context& io, const ReplayTarget& target) {
  boost::system::error_code error;
  if (target.udp) {
    asio::ip::udp::resolver resolver(io);
    const auto endpoints = resolver.resolve(target.host, target.port, error);
    if (error || endpoints.empty()) {
      return Error{target.ToString() + ": cannot resolve: " + error.message()};
    }
    const asio::ip::udp::endpoint endpoint = endpoints.begin()->endpoint();
    asio::ip::udp::socket socket(io);
    socket.open(endpoint.protocol(), error);
    if (error) return Error{target.ToString() + ": " + error.message()};
    return std::unique_ptr<Sink>(std::make_unique<UdpSink>(std::move(socket), endpoint));
  }
  asio::ip::tcp::resolver resolver(io);
  const auto endpoints = resolver.resolve(target.host, target.port, error);
  if (error) return Error{target.ToString() + ": cannot resolve: " + error.message()};
  asio::ip::tcp::socket socket(io);
  asio::connect(socket, endpoints, error);
  if (error) return Error{target.ToString() + ": cannot connect: " + error.message()};
  socket.set_option(asio::ip::tcp::no_delay(true), error);  // paced lines leave at once
  return std::unique_ptr<Sink>(std::make_unique<TcpSink>(std::move(socket)));
}

int RunReplay(const ReplayOptions& options) {
  auto target = ParseReplayTarget(options.to);
  if (!target.ok()) {
    PrintError(kCommand, target.error().message);
    return kExitUsage;
  }
  auto stream = CaptureStream::Open(options.files);
  if (!stream.ok()) {
    PrintError(kCommand, stream.error().message);
    return kExitInvalidInput;
  }
  asio::io_context io;
  auto sink = Connect(io, target.value());
  if (!sink.ok()) {
    PrintError(kCommand, sink.error().message);
    return kExitInvalidInput;
  }

  const Pacer pacer(options.rate);
  const Clock::time_point start = Clock::now();
  uint64_t records = 0;
  uint64_t bytes = 0;
  Status failure = Ok{};
  Status read =
      stream.value().ForEachLineBatch([&](const std::vector<std::string_view>& lines, uint64_t) {
        for (const std::string_view line : lines) {
          Clock::time_point due;
          if (pacer.Early(records, due)) {
            failure = sink.value()->Flush();
            if (!failure.ok()) return false;
            std::this_thread::sleep_until(due);
          }
          auto sent = sink.value()->Send(line);
          if (!sent.ok()) {
            failure = sent.error();
            return false;
          }
          bytes += sent.value();
          ++records;
        }
        return true;
      });
  if (failure.ok()) failure = sink.value()->Flush();
  if (!read.ok()) {
    PrintError(kCommand, read.error().message);
    return kExitInvalidInput;
  }
  if (!failure.ok()) {
    PrintError(kCommand, target.value().ToString() + ": " + failure.error().message + " after " +
                             std::to_string(records) + " records");
    return kExitInvalidInput;
  }
  if (auto* udp = dynamic_cast<UdpSink*>(sink.value().get()); udp && udp->too_long() > 0) {
    PrintWarning(kCommand, std::to_string(udp->too_long()) +
                               " lines longer than a datagram can carry were not sent");
    records -= udp->too_long();
  }
  const double seconds = std::chrono::duration<double>(Clock::now() - start).count();
  std::cout << "sent " << records << " records, " << bytes << " bytes to "
            << target.value().ToString() << " in " << FormatNumber(seconds, 3) << " s\n";
  return kExitOk;
}

}  // namespace

void AddReplayCommand(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<ReplayOptions>();
  CLI::App* command =
      app.add_subcommand("replay", "Send a capture's lines to a listener, e.g. a daemon.");
  command->footer(
      "tcp://HOST:PORT: one connection; every line is sent with its newline (a last line "
      "without one gets one). udp://HOST:PORT: one datagram per line, the newline stripped; "
      "lines over 65507 bytes are skipped with a warning. Empty lines are records too.\n"
      "--rate R paces the records at R per second from the start (the sender sleeps when "
      "ahead; it never spins); 0 sends as fast as the socket takes them. Any host may be "
      "named: traffic goes where --to says.\n"
      "Exit codes: 0 ok, 1 unreadable capture or a connection/send failure, 2 usage error.");
  command->add_option("files", options->files, "Capture file(s), sent in order")->required();
  command->add_option("--to", options->to, "tcp://HOST:PORT or udp://HOST:PORT")->required();
  command->add_option("--rate", options->rate, "Records per second (default 0: no pacing)")
      ->check(CLI::NonNegativeNumber);
  command->callback([options, &exit_code] { exit_code = RunReplay(*options); });
}

}  // namespace codedrift::cli
