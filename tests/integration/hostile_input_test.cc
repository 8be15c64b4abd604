// Hostile and broken input against the real codedriftd on loopback (DESIGN.md §6): for each
// case the daemon stays up, keeps answering /metrics, counts what it rejected by reason, keeps
// exact counts for well-formed traffic sent alongside, and stays under a memory bound. Every
// blocking step has a timeout (hostile_clients.h, WaitFor), so a case that goes wrong fails
// within seconds instead of hanging.
#include <algorithm>
#include <atomic>
#include <chrono>
#include <future>
#include <memory>
#include <set>
#include <string>
#include <thread>
#include <vector>

#include <gtest/gtest.h>

#include "harness.h"
#include "hostile_clients.h"

namespace codedrift::testing {
namespace {

using std::chrono::milliseconds;
using std::chrono::seconds;

// The daemon's own working set is a few MiB of code, a 64 KiB read buffer and at most one
// max_record_bytes carry per connection, and windows of 100k symbols per model. None of the
// hostile inputs may make it hold what it is sent: a 1 GiB line is never buffered, and 10,000
// refused connections leave nothing behind. 200 MiB is far above the honest working set and
// far below what buffering the line (1 GiB) or a leak per connection would cost.
constexpr int64_t kMaxDaemonRssBytes = int64_t{200} << 20;

constexpr uint32_t kMaxRecordBytes = 4096;
constexpr char kAdminToken[] = "hostile-test-admin-token-0123456789";

std::string Config() {
  const std::string model = "{name: bytes, symbols: {kind: bytes}, window: {symbols: 100000}}";
  return "http: {listen: 127.0.0.1:0, admin_token_file: admin.token}\n"
         "state_dir: state\n"
         "evaluate_every: 100ms\n"
         "streams:\n"
         "  - name: lines\n"
         "    listen: tcp://127.0.0.1:0\n"
         "    framing: lines\n"
         "    max_record_bytes: " +
         std::to_string(kMaxRecordBytes) +
         "\n"
         "    max_connections: 128\n"
         "    idle_timeout: 1s\n"
         "    models:\n"
         "      - " +
         model +
         "\n"
         "      - {name: tokens, symbols: {kind: tokens}, window: {symbols: 100000}}\n"
         "  - name: framed\n"
         "    listen: tcp://127.0.0.1:0\n"
         "    framing: u32be\n"
         "    max_record_bytes: " +
         std::to_string(kMaxRecordBytes) +
         "\n"
         "    max_connections: 128\n"
         "    models: [" +
         model +
         "]\n"
         "  - name: packets\n"
         "    listen: udp://127.0.0.1:0\n"
         "    max_record_bytes: 1024\n"
         "    models: [{name: field, symbols: {kind: field, width_bits: 8},"
         " window: {symbols: 100000}}]\n"
         "  - name: crowded\n"
         "    listen: tcp://127.0.0.1:0\n"
         "    max_connections: 4\n"
         "    models: [" +
         model +
         "]\n"
         "  - name: fenced\n"
         "    listen: tcp://127.0.0.1:0\n"
         "    allow: [192.0.2.0/24]\n"  // TEST-NET-1 (RFC 5737): never a loopback peer
         "    models: [" +
         model +
         "]\n"
         "  - name: fenced-udp\n"
         "    listen: udp://127.0.0.1:0\n"
         "    allow: [192.0.2.0/24]\n"
         "    models: [" +
         model + "]\n";
}

// Well-formed telemetry lines, each ending in '\n' (invented, orchard soil-probe style).
std::string ProbeLines(int count) {
  std::string out;
  for (int i = 0; i < count; ++i) {
    out += "probe=" + std::to_string(i % 40) + " moisture=" + std::to_string(i % 97) +
           " temp=" + std::to_string(5 + i % 25) + " ok\n";
  }
  return out;
}

std::string ProbeFrames(int count) {
  std::string out;
  for (int i = 0; i < count; ++i) out += U32Frame("probe=" + std::to_string(i) + " ok");
  return out;
}

std::string Label(const std::string& key, const std::string& value) {
  return key + "=\"" + value + "\"";
}

class HostileInput : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_.Write("admin.token", std::string(kAdminToken) + "\n");
    daemon_ = std::make_unique<DaemonProcess>(dir_, Config());
    ASSERT_TRUE(daemon_->WaitReady()) << daemon_->Log();
  }

  // Every case ends here: still running, still serving, still small.
  void TearDown() override {
    if (daemon_ == nullptr) return;
    EXPECT_TRUE(daemon_->Running()) << daemon_->Log();
    EXPECT_EQ(HttpCall(daemon_->http_port(), "GET", "/metrics").status, 200);
    // Now and at the peak: the bound held throughout the case, not just after it.
    for (const std::string field : {"VmRSS:", "VmHWM:"}) {
      const int64_t bytes = ProcessMemoryBytes(daemon_->pid(), field);
      EXPECT_GT(bytes, 0) << field;
      EXPECT_LT(bytes, kMaxDaemonRssBytes + kSanitizerRssAllowance)
          << field << " " << (bytes >> 20) << " MiB";
    }
    EXPECT_EQ(daemon_->Stop(), 0) << daemon_->Log();
  }

  uint16_t Port(const std::string& stream) const { return daemon_->stream_port(stream); }

  // A counter's value (-1 when the series is missing).
  double Count(const std::string& name, const std::string& stream, const std::string& key = "",
               const std::string& value = "") const {
    std::vector<std::string> labels = {Label("stream", stream)};
    if (!key.empty()) labels.push_back(Label(key, value));
    return daemon_->Metric(name, labels).value_or(-1);
  }
  double Records(const std::string& stream) const {
    return Count("codedrift_records_total", stream);
  }
  double Rejected(const std::string& stream, const std::string& reason) const {
    return Count("codedrift_records_rejected_total", stream, "reason", reason);
  }
  double Refused(const std::string& stream, const std::string& reason) const {
    return Count("codedrift_connections_rejected_total", stream, "reason", reason);
  }
  double Closed(const std::string& stream, const std::string& reason) const {
    return Count("codedrift_connections_closed_total", stream, "reason", reason);
  }
  double Symbols(const std::string& stream, const std::string& model) const {
    return daemon_
        ->Metric("codedrift_symbols_total", {Label("stream", stream), Label("model", model)})
        .value_or(-1);
  }

  TempDir dir_;
  std::unique_ptr<DaemonProcess> daemon_;
};

TEST_F(HostileInput, GigabyteLineWithoutNewlineIsCutOnceAndCounted) {
  // 1 GiB streamed in 1 MiB chunks of one reused buffer: the test never holds the line either.
  constexpr int64_t kLineBytes = int64_t{1} << 30;
  const std::string chunk(1 << 20, 'x');
  const std::string side = ProbeLines(5000);
  std::atomic<bool> sending{true};
  std::atomic<int> metrics_answers{0};
  // /metrics keeps answering while the daemon swallows the line.
  std::thread scraper([&] {
    while (sending) {
      if (HttpCall(daemon_->http_port(), "GET", "/metrics").status == 200) ++metrics_answers;
      std::this_thread::sleep_for(milliseconds(100));  // a scrape pace, not a wait
    }
  });
  auto side_sent =
      std::async(std::launch::async, [&] { return SendAndFinish(Port("lines"), side); });
  ClientSocket giant = Connect(Port("lines"));
  ASSERT_TRUE(giant.ok());
  int64_t sent = 0;
  while (sent < kLineBytes && giant.Send(chunk)) sent += static_cast<int64_t>(chunk.size());
  const bool finished = giant.Finish();
  sending = false;
  scraper.join();
  ASSERT_EQ(sent, kLineBytes);
  ASSERT_TRUE(finished);
  ASSERT_TRUE(side_sent.get());
  EXPECT_GT(metrics_answers.load(), 0);

  // The giant line is one truncated record of max_record_bytes; the side lines arrive exactly.
  EXPECT_TRUE(WaitFor([&] { return Records("lines") == 5000 + 1; })) << Records("lines");
  EXPECT_EQ(Rejected("lines", "overlong"), 1);
  EXPECT_EQ(Count("codedrift_bytes_total", "lines"), static_cast<double>(kLineBytes + side.size()));
  EXPECT_TRUE(WaitFor([&] {
    return Symbols("lines", "bytes") == static_cast<double>(side.size() + kMaxRecordBytes);
  })) << Symbols("lines", "bytes");
}

TEST_F(HostileInput, BinaryNulAndInvalidUtf8AreCountedAsBytes) {
  std::string junk;
  uint64_t state = 0x9e3779b97f4a7c15ull;  // xorshift: invented bytes, reproducible
  for (int i = 0; i < 200000; ++i) {
    state ^= state << 13;
    state ^= state >> 7;
    state ^= state << 17;
    junk += static_cast<char>(state);
  }
  junk += std::string("\0\0\0\n\xc3\x28\xa0\xa1\xe2\x28\xa1\xf0\x90\x28\xbc\xff\xfe\n", 18);
  std::string kept;  // what the line framer delivers: lines up to max_record_bytes, cut there
  int64_t records = 0;
  int64_t overlong = 0;
  for (size_t pos = 0; pos < junk.size();) {
    const size_t newline = junk.find('\n', pos);
    const size_t end = newline == std::string::npos ? junk.size() : newline + 1;
    if (end - pos > kMaxRecordBytes) ++overlong;
    kept += junk.substr(pos, std::min<size_t>(end - pos, kMaxRecordBytes));
    ++records;
    pos = end;
  }
  auto side_sent = std::async(std::launch::async,
                              [&] { return SendAndFinish(Port("lines"), ProbeLines(1000)); });
  ASSERT_TRUE(SendAndFinish(Port("lines"), junk));
  ASSERT_TRUE(side_sent.get());
  EXPECT_TRUE(WaitFor([&] { return Records("lines") == static_cast<double>(records + 1000); }))
      << Records("lines");
  EXPECT_EQ(Rejected("lines", "overlong"), static_cast<double>(overlong));
  EXPECT_TRUE(WaitFor([&] {
    return Symbols("lines", "bytes") == static_cast<double>(kept.size() + ProbeLines(1000).size());
  })) << Symbols("lines", "bytes");
  EXPECT_GT(Symbols("lines", "tokens"), 0);  // the token model took the junk too
}

TEST_F(HostileInput, FourGibLengthPrefixClosesOnlyThatConnection) {
  auto side_sent = std::async(std::launch::async,
                              [&] { return SendAndFinish(Port("framed"), ProbeFrames(2000)); });
  ClientSocket hostile = Connect(Port("framed"));
  ASSERT_TRUE(hostile.ok());
  hostile.Send(std::string("\xff\xff\xff\xff", 4) + std::string(1000, 'z'));
  // The daemon closes the connection: the framing cannot be trusted past a 4 GiB length.
  hostile.ReadToEnd();
  ASSERT_TRUE(side_sent.get());
  EXPECT_TRUE(WaitFor([&] { return Records("framed") == 2000; })) << Records("framed");
  EXPECT_EQ(Rejected("framed", "oversized_frame"), 1);
  EXPECT_TRUE(WaitFor([&] { return Closed("framed", "framing_lost") == 1; }));
}

TEST_F(HostileInput, TruncatedFramesAreCountedWhenTheConnectionEnds) {
  auto side_sent = std::async(std::launch::async,
                              [&] { return SendAndFinish(Port("framed"), ProbeFrames(2000)); });
  // Two whole frames, then a header announcing 100 bytes and only 10 of them.
  ASSERT_TRUE(SendAndFinish(
      Port("framed"),
      U32Frame("a") + U32Frame("b") + std::string("\0\0\0\x64", 4) + std::string(10, 'c')));
  // Half a length prefix.
  ASSERT_TRUE(SendAndFinish(Port("framed"), std::string("\0\0", 2)));
  ASSERT_TRUE(side_sent.get());
  EXPECT_TRUE(WaitFor([&] { return Records("framed") == 2000 + 2; })) << Records("framed");
  EXPECT_EQ(Rejected("framed", "truncated_frame"), 2);
}

TEST_F(HostileInput, OversizedDatagramsAreDroppedAndCounted) {
  const int fd = ::socket(AF_INET, SOCK_DGRAM, 0);
  ASSERT_GE(fd, 0);
  const std::string giant(65507, 'g');  // the largest UDP payload over IPv4
  constexpr int kRounds = 10;
  for (int round = 1; round <= kRounds; ++round) {
    ASSERT_TRUE(SendDatagram(fd, Port("packets"), giant));
    for (int i = 0; i < 10; ++i) {
      ASSERT_TRUE(SendDatagram(fd, Port("packets"), std::string(1 + i, static_cast<char>(i))));
    }
    // Let the daemon catch up each round, so no well-formed datagram can be lost to a full
    // receive buffer (the kernel may grant less than the 8 MiB asked for).
    ASSERT_TRUE(WaitFor([&] {
      return Rejected("packets", "oversized_datagram") == round && Records("packets") == 10 * round;
    })) << round
        << ": " << Records("packets");
  }
  ::close(fd);
  EXPECT_TRUE(WaitFor([&] { return Symbols("packets", "field") == 10 * kRounds; }))
      << Symbols("packets", "field");
}

TEST_F(HostileInput, TenThousandConnectionAttemptsAreRefusedAndCounted) {
  // Fill max_connections (4), then knock 10,000 times in batches of 250 connections.
  std::vector<ClientSocket> held;
  for (int i = 0; i < 4; ++i) {
    held.push_back(Connect(Port("crowded")));
    ASSERT_TRUE(held.back().ok());
    ASSERT_TRUE(held.back().Send("held=" + std::to_string(i) + "\n"));
  }
  ASSERT_TRUE(WaitFor([&] { return Count("codedrift_connections", "crowded") == 4; }));
  constexpr int kAttempts = 10000;
  constexpr int kBatch = 250;
  int closed_by_daemon = 0;
  for (int done = 0; done < kAttempts; done += kBatch) {
    std::vector<ClientSocket> batch;
    for (int i = 0; i < kBatch; ++i) batch.push_back(Connect(Port("crowded")));
    for (auto& socket : batch) closed_by_daemon += socket.ok() && socket.ReadToEnd() ? 1 : 0;
  }
  EXPECT_EQ(closed_by_daemon, kAttempts);
  EXPECT_TRUE(WaitFor([&] { return Refused("crowded", "too_many") == kAttempts; }))
      << Refused("crowded", "too_many");
  // The held connections were never disturbed and a slot frees up once they go.
  for (auto& socket : held) {
    ASSERT_TRUE(socket.Send("still=here\n"));
    ASSERT_TRUE(socket.Finish());
  }
  ASSERT_TRUE(SendAndFinish(Port("crowded"), ProbeLines(100)));
  EXPECT_TRUE(WaitFor([&] { return Records("crowded") == 4 * 2 + 100; })) << Records("crowded");
  EXPECT_EQ(Count("codedrift_connections", "crowded"), 0);
}

TEST_F(HostileInput, TrickleClientHoldsUpNobodyAndIdlesOut) {
  // One byte every 100 ms keeps the connection within idle_timeout (1s) while it trickles.
  const std::string slow = "slow=record-of-sixteen\n";
  ClientSocket trickler = Connect(Port("lines"));
  ASSERT_TRUE(trickler.ok());
  auto trickled = std::async(std::launch::async, [&] {
    for (char c : slow) {
      if (!trickler.Send(std::string(1, c))) return false;
      std::this_thread::sleep_for(milliseconds(100));  // the pace under test, not a wait
    }
    return true;
  });
  // Meanwhile a well-formed client is served in full.
  ASSERT_TRUE(SendAndFinish(Port("lines"), ProbeLines(3000)));
  EXPECT_TRUE(WaitFor([&] { return Records("lines") == 3000; }, seconds(5))) << Records("lines");
  EXPECT_EQ(trickled.wait_for(milliseconds(0)), std::future_status::timeout)
      << "the side client should finish while the trickler is still sending";
  ASSERT_TRUE(trickled.get());
  EXPECT_EQ(Closed("lines", "idle"), 0);  // 2.4 s of trickling, never 1 s of silence
  // Then silence: closed after idle_timeout, its complete record kept.
  EXPECT_TRUE(trickler.ReadToEnd());
  EXPECT_TRUE(WaitFor([&] { return Closed("lines", "idle") == 1; }, seconds(5)));
  EXPECT_EQ(Records("lines"), 3000 + 1);
}

TEST_F(HostileInput, ClientsDisconnectingMidRecordLoseNothingElse) {
  constexpr int kClients = 40;
  auto side_sent = std::async(std::launch::async,
                              [&] { return SendAndFinish(Port("framed"), ProbeFrames(3000)); });
  std::vector<std::future<bool>> clients;
  for (int i = 0; i < kClients; ++i) {
    // Three whole frames, then 50 bytes of a 200-byte frame, then a normal close.
    clients.push_back(std::async(std::launch::async, [&] {
      return SendAndFinish(Port("framed"), U32Frame("one") + U32Frame("two") + U32Frame("three") +
                                               std::string("\0\0\0\xc8", 4) + std::string(50, 'p'));
    }));
    // And an abortive close (reset) in the middle of a line on the other stream.
    clients.push_back(std::async(std::launch::async, [&] {
      ClientSocket socket = Connect(Port("lines"));
      const bool sent = socket.ok() && socket.Send("half a li");
      socket.Reset();
      return sent;
    }));
  }
  for (auto& client : clients) EXPECT_TRUE(client.get());
  ASSERT_TRUE(side_sent.get());
  EXPECT_TRUE(WaitFor([&] { return Records("framed") == kClients * 3 + 3000; }))
      << Records("framed");
  EXPECT_EQ(Rejected("framed", "truncated_frame"), kClients);
  EXPECT_TRUE(WaitFor([&] {
    return Count("codedrift_connections", "lines") == 0 &&
           Count("codedrift_connections", "framed") == 0;
  }));
  EXPECT_LE(Records("lines"), kClients);  // a reset may discard what the kernel still held
}

TEST_F(HostileInput, HugeHttpHeadersAndBodiesAreRefused) {
  const uint16_t http = daemon_->http_port();
  const std::string one_huge =
      "GET /metrics HTTP/1.1\r\nHost: x\r\nX-Big: " + std::string(512 << 10, 'h') + "\r\n\r\n";
  EXPECT_EQ(StatusOf(RawHttp(http, one_huge)), 431);
  std::string many = "GET /metrics HTTP/1.1\r\nHost: x\r\n";
  for (int i = 0; i < 300; ++i)
    many += "X-H" + std::to_string(i) + ": " + std::string(1000, 'm') + "\r\n";
  EXPECT_EQ(StatusOf(RawHttp(http, many + "\r\n")), 431);
  const std::string long_target =
      "GET /" + std::string(100 << 10, 'a') + " HTTP/1.1\r\nHost: x\r\n\r\n";
  EXPECT_EQ(StatusOf(RawHttp(http, long_target)), 431);
  const std::string big_body =
      "POST /api/v1/reload HTTP/1.1\r\nHost: x\r\nContent-Length: " + std::to_string(1 << 20) +
      "\r\n\r\n" + std::string(1 << 20, 'b');
  EXPECT_EQ(StatusOf(RawHttp(http, big_body)), 413);
  EXPECT_EQ(StatusOf(RawHttp(http, "\x16\x03\x01\x02\x00garbage\r\n\r\n")), 400);  // TLS hello
}

TEST_F(HostileInput, PathTricksNeverReachAFileAndAddNoSeries) {
  const uint16_t http = daemon_->http_port();
  for (const std::string target :
       {"/api/v1/models/../../etc/passwd", "/api/v1/models/lines/../../../../etc/passwd",
        "/api/v1/models/%2e%2e/%2e%2e/etc/passwd", "/api/v1/models/%2E%2E%2F%2E%2E%2Fetc%2Fpasswd",
        "/api/v1/models/..%2f..%2fetc%2fpasswd", "/api/v1/models/..%5c..%5cetc%5cpasswd",
        "/api/v1/models/lines/bytes%00/proposal", "/api/v1/models/lines/bytes/proposal/../../..",
        "//etc/passwd", "/%2e%2e/%2e%2e/etc/passwd", "/api/v1/models/lines/bytes%2fproposal",
        "/api/v1/models/%252e%252e/etc", "/api/v1/models/lines/./bytes", "/etc/passwd",
        "http://127.0.0.1/etc/passwd", "/api/v1/models/lines/bytes/%"}) {
    const HttpReply reply = HttpCall(http, "GET", target);
    EXPECT_TRUE(reply.status == 400 || reply.status == 404) << target << " -> " << reply.status;
    EXPECT_EQ(reply.body.find("root:"), std::string::npos) << target;
  }
  // Names that are not in the config, or could not be.
  for (const std::string& target : std::vector<std::string>{
           "/api/v1/models/nosuch/bytes", "/api/v1/models/lines/nosuch",
           "/api/v1/models/LINES/bytes", "/api/v1/models/" + std::string(65, 'a') + "/bytes",
           "/api/v1/models/lines/nosuch/proposal"}) {
    EXPECT_EQ(HttpCall(http, "GET", target).status, 404) << target;
  }
  for (int i = 0; i < 100; ++i) {
    HttpCall(http, "GET", "/api/v1/models/stream" + std::to_string(i) + "/model");
  }
  // Requests never mint label values: every stream and model label names a configured one.
  const std::string body = HttpCall(http, "GET", "/metrics").body;
  const std::set<std::string> streams = {"lines",   "framed", "packets",
                                         "crowded", "fenced", "fenced-udp"};
  const std::set<std::string> models = {"bytes", "tokens", "field"};
  for (const auto& [key, allowed] :
       {std::pair{std::string("stream=\""), streams}, std::pair{std::string("model=\""), models}}) {
    for (size_t at = body.find(key); at != std::string::npos; at = body.find(key, at + 1)) {
      const size_t start = at + key.size();
      const std::string value = body.substr(start, body.find('"', start) - start);
      EXPECT_TRUE(allowed.contains(value)) << key << value;
    }
  }
}

TEST_F(HostileInput, PeersOutsideAllowAreRefusedBeforeAByte) {
  ClientSocket socket = Connect(Port("fenced"));
  ASSERT_TRUE(socket.ok());
  socket.Send(ProbeLines(100));     // may fail once the daemon has closed: refused, not read
  EXPECT_TRUE(socket.ReadToEnd());  // closed by the daemon
  EXPECT_TRUE(WaitFor([&] { return Refused("fenced", "not_allowed") == 1; }));
  EXPECT_EQ(Count("codedrift_bytes_total", "fenced"), 0);
  EXPECT_EQ(Records("fenced"), 0);

  const int fd = ::socket(AF_INET, SOCK_DGRAM, 0);
  ASSERT_GE(fd, 0);
  for (int i = 0; i < 5; ++i) ASSERT_TRUE(SendDatagram(fd, Port("fenced-udp"), "secret"));
  ::close(fd);
  EXPECT_TRUE(WaitFor([&] { return Rejected("fenced-udp", "not_allowed") == 5; }));
  EXPECT_EQ(Records("fenced-udp"), 0);
}

TEST_F(HostileInput, StateChangingEndpointsNeedTheAdminToken) {
  const uint16_t http = daemon_->http_port();
  std::string wrong = kAdminToken;
  wrong.back() = wrong.back() == 'x' ? 'y' : 'x';  // same length, last byte differs
  for (const std::string target : {"/api/v1/reload", "/api/v1/models/lines/bytes/proposal"}) {
    EXPECT_EQ(HttpCall(http, "POST", target).status, 401) << target;
    EXPECT_EQ(HttpCall(http, "POST", target, "", {"Authorization: Bearer " + wrong}).status, 401)
        << target;
    EXPECT_EQ(
        HttpCall(http, "POST", target, "", {"Authorization: Basic " + std::string(kAdminToken)})
            .status,
        401)
        << target;
  }
  EXPECT_EQ(HttpCall(http, "GET", "/api/v1/reload").status, 405);
  EXPECT_EQ(HttpCall(http, "POST", "/api/v1/reload", "",
                     {"Authorization: Bearer " + std::string(kAdminToken)})
                .status,
            200);
}

}  // namespace
}  // namespace codedrift::testing
