// StreamListener over real loopback sockets: records and counters exactly, and every limit.
// Clients are plain POSIX sockets; the test waits on delivered records (condition variable),
// on the server closing a connection (poll with a deadline) or on Stop + WaitStopped.
#include <chrono>
#include <condition_variable>
#include <filesystem>
#include <map>
#include <mutex>
#include <set>
#include <string>
#include <thread>
#include <vector>

#include <gtest/gtest.h>

#include "io_pool.h"
#include "loopback_client.h"
#include "stream_listener.h"
#include <sys/socket.h>
#include <unistd.h>

namespace codedrift {
namespace {

using std::chrono::milliseconds;
constexpr auto kTimeout = std::chrono::seconds(10);

StreamConfig Config(ListenScheme scheme, Framing framing) {
  StreamConfig config;
  config.name = "test";
  config.listen.scheme = scheme;
  config.listen.host = "127.0.0.1";
  config.listen.port = 0;
  config.framing = framing;
  config.allow = {Cidr::LoopbackV4(), Cidr::LoopbackV6()};
  return config;
}

class ListenerTest : public ::testing::Test {
 protected:
  void SetUp() override { pool_.Start(); }

  void TearDown() override {
    if (listener_) {
      listener_->Stop(milliseconds(0));
      EXPECT_TRUE(listener_->WaitStopped(std::chrono::steady_clock::now() + kTimeout));
    }
    pool_.Stop();
    listener_.reset();
  }

  void Start(const StreamConfig& config) {
    listener_ = std::make_unique<StreamListener>(
        pool_, config, counters_,
        [this](std::string_view record) {
          std::lock_guard<std::mutex> lock(mu_);
          records_.emplace_back(record);
          record_threads_.push_back(std::this_thread::get_id());
          changed_.notify_all();
        },
        [this](std::string_view line) {
          std::lock_guard<std::mutex> lock(mu_);
          log_.emplace_back(line);
        });
    const Status started = listener_->Start();
    ASSERT_TRUE(started.ok()) << started.error().message;
  }

  // Waits until `n` records have arrived; returns them.
  std::vector<std::string> WaitRecords(size_t n) {
    std::unique_lock<std::mutex> lock(mu_);
    EXPECT_TRUE(changed_.wait_for(lock, kTimeout, [&] { return records_.size() >= n; }))
        << "got " << records_.size() << " of " << n << " records";
    return records_;
  }

  // Stops the listener and waits for every connection to finish: counters are final then.
  void StopAndWait() {
    listener_->Stop();
    ASSERT_TRUE(listener_->WaitStopped(std::chrono::steady_clock::now() + kTimeout));
  }

  std::vector<std::string> Records() {
    std::lock_guard<std::mutex> lock(mu_);
    return records_;
  }

  uint64_t RecordsTotal() const { return counters_->records_total.load(); }
  uint64_t BytesTotal() const { return counters_->bytes_total.load(); }

  IoPool pool_{2};  // the daemon's default --io-threads
  std::shared_ptr<StreamCounters> counters_ = std::make_shared<StreamCounters>();
  std::unique_ptr<StreamListener> listener_;

  std::mutex mu_;
  std::condition_variable changed_;
  std::vector<std::string> records_;
  std::vector<std::thread::id> record_threads_;  // the thread that delivered each record
  std::vector<std::string> log_;
};

using Strings = std::vector<std::string>;

// Line records include their newline (DESIGN.md §5, "For lines framing...").
TEST_F(ListenerTest, TcpLinesArriveWithNewlines) {
  Start(Config(ListenScheme::kTcp, Framing::kLines));
  ASSERT_NE(listener_->bound_port(), 0);
  Client client = ConnectTcp(listener_->bound_port());
  client.Send("alpha\nbe");
  client.Send("ta\n\ngamma\n");
  EXPECT_EQ(WaitRecords(4), (Strings{"alpha\n", "beta\n", "\n", "gamma\n"}));
  EXPECT_EQ(counters_->connections.load(), 1);
  client.ShutdownWrite();
  EXPECT_TRUE(client.ServerCloses());  // the server saw our end of stream and closed
  EXPECT_EQ(counters_->Get(ConnectionCloseReason::kPeer), 1u);
  StopAndWait();
  EXPECT_EQ(RecordsTotal(), 4u);
  EXPECT_EQ(BytesTotal(), 18u);
  EXPECT_EQ(counters_->connections.load(), 0);
  EXPECT_EQ(counters_->Get(ConnectionCloseReason::kStopped), 0u);
}

TEST_F(ListenerTest, TcpOverIpv6Loopback) {
  StreamConfig config = Config(ListenScheme::kTcp, Framing::kLines);
  config.listen.host = "::1";
  Start(config);
  Client client = ConnectTcp(listener_->bound_port(), /*v6=*/true);
  client.Send("six\n");
  EXPECT_EQ(WaitRecords(1), (Strings{"six\n"}));
}

// Length-prefixed framing: a 2- or 4-byte big-endian length, then the body (DESIGN.md §5
// framing u16be/u32be); a zero length is an empty record.
TEST_F(ListenerTest, TcpU16beFrames) {
  Start(Config(ListenScheme::kTcp, Framing::kU16be));
  Client client = ConnectTcp(listener_->bound_port());
  const std::string wire = U16Frame("abc") + U16Frame("") + U16Frame(std::string(300, 'x'));
  client.Send(wire.substr(0, 4));  // a frame split across reads
  client.Send(wire.substr(4));
  EXPECT_EQ(WaitRecords(3), (Strings{"abc", "", std::string(300, 'x')}));
  client.Close();
  StopAndWait();
  EXPECT_EQ(RecordsTotal(), 3u);
  EXPECT_EQ(BytesTotal(), wire.size());
}

TEST_F(ListenerTest, TcpU32beFrames) {
  Start(Config(ListenScheme::kTcp, Framing::kU32be));
  Client client = ConnectTcp(listener_->bound_port());
  const std::string binary("\x00\x01\n binary", 10);  // NUL and newline are plain bytes here
  client.Send(U32Frame(binary) + U32Frame("z"));
  EXPECT_EQ(WaitRecords(2), (Strings{binary, "z"}));
}

TEST_F(ListenerTest, UnixSocketLines) {
  const std::string path = (std::filesystem::temp_directory_path() /
                            ("codedrift_listener_" + std::to_string(::getpid()) + ".sock"))
                               .string();
  StreamConfig config = Config(ListenScheme::kUnix, Framing::kLines);
  config.listen.host.clear();
  config.listen.path = path;
  config.allow.clear();
  Start(config);
  EXPECT_EQ(listener_->bound_port(), 0);
  Client client = ConnectUnix(path);
  client.Send("one\ntwo\n");
  EXPECT_EQ(WaitRecords(2), (Strings{"one\n", "two\n"}));
  client.Close();
  StopAndWait();
  EXPECT_FALSE(std::filesystem::exists(path));  // Stop removes the socket file
}

TEST_F(ListenerTest, UnixSocketFileOfADeadProcessIsReplaced) {
  const std::string path = (std::filesystem::temp_directory_path() /
                            ("codedrift_stale_" + std::to_string(::getpid()) + ".sock"))
                               .string();
  {  // bind and close without unlinking, as a crashed process leaves it
    const int fd = ::socket(AF_UNIX, SOCK_STREAM, 0);
    sockaddr_un addr{};
    addr.sun_family = AF_UNIX;
    std::strncpy(addr.sun_path, path.c_str(), sizeof addr.sun_path - 1);
    ASSERT_EQ(::bind(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr), 0);
    ::close(fd);
  }
  StreamConfig config = Config(ListenScheme::kUnix, Framing::kLines);
  config.listen.path = path;
  config.allow.clear();
  Start(config);
  Client client = ConnectUnix(path);
  client.Send("fresh\n");
  EXPECT_EQ(WaitRecords(1), (Strings{"fresh\n"}));

  // A second listener on the same live path is refused.
  StreamListener second(
      pool_, config, std::make_shared<StreamCounters>(), [](std::string_view) {},
      [](std::string_view) {});
  const Status status = second.Start();
  ASSERT_FALSE(status.ok());
  EXPECT_NE(status.error().message.find("another process"), std::string::npos)
      << status.error().message;
}

TEST_F(ListenerTest, UdpDatagramsAreRecords) {
  Start(Config(ListenScheme::kUdp, Framing::kDatagram));
  ASSERT_NE(listener_->bound_port(), 0);
  SendDatagram(listener_->bound_port(), "first packet");
  SendDatagram(listener_->bound_port(), "");
  SendDatagram(listener_->bound_port(), std::string("\x00\xff", 2));
  EXPECT_EQ(WaitRecords(3), (Strings{"first packet", "", std::string("\x00\xff", 2)}));
  StopAndWait();
  EXPECT_EQ(RecordsTotal(), 3u);
  EXPECT_EQ(BytesTotal(), 14u);
}

TEST_F(ListenerTest, UdpReceiveBufferGrantIsLogged) {
  StreamConfig config = Config(ListenScheme::kUdp, Framing::kDatagram);
  config.receive_buffer_bytes = 1u << 20;
  Start(config);
  std::lock_guard<std::mutex> lock(mu_);
  bool found = false;
  for (const std::string& line : log_) {
    if (line.find("stream test: SO_RCVBUF asked 1048576 bytes, kernel granted ") == 0) {
      found = true;
    }
  }
  EXPECT_TRUE(found);
}

TEST_F(ListenerTest, UdpOversizedDatagramIsDropped) {
  StreamConfig config = Config(ListenScheme::kUdp, Framing::kDatagram);
  config.max_record_bytes = 8;
  Start(config);
  SendDatagram(listener_->bound_port(), "123456789");  // 9 bytes
  SendDatagram(listener_->bound_port(), "12345678");   // exactly the limit
  EXPECT_EQ(WaitRecords(1), (Strings{"12345678"}));
  StopAndWait();
  EXPECT_EQ(Records(), (Strings{"12345678"}));
  EXPECT_EQ(counters_->Get(RecordRejectReason::kOversizedDatagram), 1u);
  EXPECT_EQ(RecordsTotal(), 1u);
  EXPECT_EQ(BytesTotal(), 17u);  // the true length of the dropped datagram counts too
}

TEST_F(ListenerTest, UdpPeerOutsideAllowIsDropped) {
  StreamConfig config = Config(ListenScheme::kUdp, Framing::kDatagram);
  config.allow = {Cidr::Parse("10.0.0.0/8").value()};
  Start(config);
  SendDatagram(listener_->bound_port(), "let me in");
  StopAndWait();  // reads what is queued before closing
  EXPECT_TRUE(Records().empty());
  EXPECT_EQ(counters_->Get(RecordRejectReason::kNotAllowed), 1u);
  EXPECT_EQ(RecordsTotal(), 0u);
}

TEST_F(ListenerTest, TcpPeerOutsideAllowIsClosedBeforeReading) {
  StreamConfig config = Config(ListenScheme::kTcp, Framing::kLines);
  config.allow = {Cidr::Parse("10.0.0.0/8").value(), Cidr::Parse("2001:db8::/32").value()};
  Start(config);
  Client client = ConnectTcp(listener_->bound_port());
  client.TrySend("sneaky\n");
  EXPECT_TRUE(client.ServerCloses());
  EXPECT_EQ(counters_->Get(ConnectionRejectReason::kNotAllowed), 1u);
  StopAndWait();
  EXPECT_TRUE(Records().empty());
  EXPECT_EQ(BytesTotal(), 0u);
  EXPECT_EQ(counters_->connections.load(), 0);
}

TEST_F(ListenerTest, ConnectionsBeyondMaxAreRefused) {
  StreamConfig config = Config(ListenScheme::kTcp, Framing::kLines);
  config.max_connections = 1;
  Start(config);
  Client first = ConnectTcp(listener_->bound_port());
  first.Send("first\n");
  WaitRecords(1);  // the first connection is admitted
  Client second = ConnectTcp(listener_->bound_port());
  second.TrySend("second\n");
  EXPECT_TRUE(second.ServerCloses());
  EXPECT_EQ(counters_->Get(ConnectionRejectReason::kTooMany), 1u);
  first.Send("again\n");  // the admitted one is unaffected
  EXPECT_EQ(WaitRecords(2), (Strings{"first\n", "again\n"}));
  EXPECT_EQ(counters_->connections.load(), 1);
}

TEST_F(ListenerTest, OverlongLineIsTruncated) {
  StreamConfig config = Config(ListenScheme::kTcp, Framing::kLines);
  config.max_record_bytes = 8;
  config.overlong = OverlongPolicy::kTruncate;
  Start(config);
  Client client = ConnectTcp(listener_->bound_port());
  client.Send("0123456789abcdef\nok\n");
  EXPECT_EQ(WaitRecords(2), (Strings{"01234567", "ok\n"}));
  client.Close();
  StopAndWait();
  EXPECT_EQ(counters_->Get(RecordRejectReason::kOverlong), 1u);
  EXPECT_EQ(RecordsTotal(), 2u);
}

TEST_F(ListenerTest, OverlongLineIsDropped) {
  StreamConfig config = Config(ListenScheme::kTcp, Framing::kLines);
  config.max_record_bytes = 8;
  config.overlong = OverlongPolicy::kDrop;
  Start(config);
  Client client = ConnectTcp(listener_->bound_port());
  client.Send("0123456789abcdef\nok\n");
  EXPECT_EQ(WaitRecords(1), (Strings{"ok\n"}));
  client.Close();
  StopAndWait();
  EXPECT_EQ(counters_->Get(RecordRejectReason::kOverlong), 1u);
  EXPECT_EQ(RecordsTotal(), 1u);
}

TEST_F(ListenerTest, OversizedFrameClosesTheConnection) {
  StreamConfig config = Config(ListenScheme::kTcp, Framing::kU16be);
  config.max_record_bytes = 8;
  Start(config);
  Client client = ConnectTcp(listener_->bound_port());
  client.Send(U16Frame("abc") + U16Frame("123456789") + U16Frame("lost"));
  EXPECT_TRUE(client.ServerCloses());
  EXPECT_EQ(Records(), (Strings{"abc"}));
  EXPECT_EQ(counters_->Get(RecordRejectReason::kOversizedFrame), 1u);
  EXPECT_EQ(counters_->Get(ConnectionCloseReason::kFramingLost), 1u);
  EXPECT_EQ(counters_->connections.load(), 0);
}

TEST_F(ListenerTest, ConnectionEndingInsideAFrameCountsTruncated) {
  Start(Config(ListenScheme::kTcp, Framing::kU32be));
  Client client = ConnectTcp(listener_->bound_port());
  client.Send(U32Frame("hello"));
  WaitRecords(1);  // admitted
  client.Send(U32Frame("cut short").substr(0, 7));
  client.Close();
  StopAndWait();
  EXPECT_EQ(Records(), (Strings{"hello"}));
  EXPECT_EQ(counters_->Get(RecordRejectReason::kTruncatedFrame), 1u);
  EXPECT_EQ(RecordsTotal(), 1u);
}

TEST_F(ListenerTest, IdleConnectionIsClosedAndItsPartialLineFlushed) {
  StreamConfig config = Config(ListenScheme::kTcp, Framing::kLines);
  config.idle_timeout = milliseconds(150);
  Start(config);
  Client quiet = ConnectTcp(listener_->bound_port());
  quiet.Send("whole\npartial");
  EXPECT_TRUE(quiet.ServerCloses());
  EXPECT_EQ(Records(), (Strings{"whole\n", "partial"}));
  EXPECT_EQ(counters_->Get(ConnectionCloseReason::kIdle), 1u);
  EXPECT_EQ(counters_->connections.load(), 0);
}

// Stop reads what the peer already sent, flushes the unterminated line, then closes. A unix
// socket makes "already sent" exact: send() returns once the bytes sit in our receive queue.
TEST_F(ListenerTest, StopDrainsQueuedBytesAndFlushes) {
  const std::string path = (std::filesystem::temp_directory_path() /
                            ("codedrift_drain_" + std::to_string(::getpid()) + ".sock"))
                               .string();
  StreamConfig config = Config(ListenScheme::kUnix, Framing::kLines);
  config.listen.path = path;
  config.allow.clear();
  Start(config);
  Client client = ConnectUnix(path);
  client.Send("head\n");
  WaitRecords(1);  // admitted and reading
  client.Send("body\ntail without newline");
  StopAndWait();
  EXPECT_EQ(Records(), (Strings{"head\n", "body\n", "tail without newline"}));
  EXPECT_EQ(counters_->Get(ConnectionCloseReason::kStopped), 1u);
  EXPECT_EQ(counters_->connections.load(), 0);
  EXPECT_TRUE(client.ServerCloses());
}

TEST_F(ListenerTest, SlowClientDoesNotHoldUpOthers) {
  Start(Config(ListenScheme::kTcp, Framing::kLines));
  Client stuck = ConnectTcp(listener_->bound_port());
  stuck.Send("half a li");  // and never more
  Client busy = ConnectTcp(listener_->bound_port());
  busy.Send("one\ntwo\n");
  EXPECT_EQ(WaitRecords(2), (Strings{"one\n", "two\n"}));
}

// Each connection is placed on one io thread and stays there (no cache-cold hops between
// cores); the connections are spread over both threads of the pool.
TEST_F(ListenerTest, ConnectionsAreSpreadOverIoThreadsAndStayOnOne) {
  Start(Config(ListenScheme::kTcp, Framing::kLines));
  constexpr int kClients = 4;
  constexpr int kRounds = 20;
  std::vector<Client> clients;
  for (int i = 0; i < kClients; ++i) clients.push_back(ConnectTcp(listener_->bound_port()));
  size_t sent = 0;
  for (int round = 0; round < kRounds; ++round) {
    for (int i = 0; i < kClients; ++i) {
      clients[i].Send(std::to_string(i) + "\n");
      WaitRecords(++sent);  // one read per send, so one handler run per record
    }
  }
  std::lock_guard<std::mutex> lock(mu_);
  ASSERT_EQ(records_.size(), sent);
  std::map<std::string, std::set<std::thread::id>> threads_by_client;
  std::set<std::thread::id> all_threads;
  for (size_t r = 0; r < records_.size(); ++r) {
    threads_by_client[records_[r]].insert(record_threads_[r]);
    all_threads.insert(record_threads_[r]);
  }
  ASSERT_EQ(threads_by_client.size(), static_cast<size_t>(kClients));
  for (const auto& [client, threads] : threads_by_client) {
    EXPECT_EQ(threads.size(), 1u) << "connection " << client << " ran on several threads";
  }
  EXPECT_EQ(all_threads.size(), pool_.ingest_size());
}

TEST_F(ListenerTest, BusyTcpPortIsAnErrorValue) {
  Start(Config(ListenScheme::kTcp, Framing::kLines));
  StreamConfig config = Config(ListenScheme::kTcp, Framing::kLines);
  config.listen.port = listener_->bound_port();
  StreamListener second(
      pool_, config, std::make_shared<StreamCounters>(), [](std::string_view) {},
      [](std::string_view) {});
  const Status status = second.Start();
  ASSERT_FALSE(status.ok());
  EXPECT_NE(status.error().message.find("cannot listen"), std::string::npos)
      << status.error().message;
}

}  // namespace
}  // namespace codedrift
