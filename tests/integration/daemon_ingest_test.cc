// The real daemon over real loopback sockets: every framing delivers exact records, and the
// figures it serves equal what `codedrift inspect` computes on the same last-N symbols.
#include <cmath>
#include <random>
#include <thread>

#include <gtest/gtest.h>

#include "harness.h"

namespace codedrift::testing {
namespace {

std::string Config(const std::string& streams) {
  return "http: {listen: 127.0.0.1:0}\n"
         "state_dir: state\n"
         "evaluate_every: 100ms\n"
         "streams:\n" +
         streams;
}

bool NearlyEqual(double a, double b) {
  return std::abs(a - b) <= 1e-9 * std::max(1.0, std::abs(b));
}

TEST(DaemonIngest, TcpLinesFiguresEqualInspectOnTheLastNSymbols) {
  TempDir dir;
  const std::string training = ProbeLines(1, 2000);
  dir.Write("training.log", training);
  const auto trained = RunCommand(CliPath() + " train --symbols bytes -o " +
                                  dir.File("probe.table") + " " + dir.File("training.log"));
  ASSERT_EQ(trained.exit_code, 0) << trained.out;

  DaemonProcess daemon(dir, Config(R"(  - name: uplink
    listen: tcp://127.0.0.1:0
    framing: lines
    models:
      - name: bytes
        symbols: {kind: bytes}
        window: {symbols: 20000}
        table: probe.table
)"));
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  const std::string capture = ProbeLines(2, 3000);
  SendTcp(daemon.stream_port("uplink"), capture);

  // Wait until an evaluation has seen every byte sent.
  nlohmann::json model;
  ASSERT_TRUE(WaitFor([&] {
    model = daemon.ModelJson("uplink", "bytes");
    return model.is_object() && model.value("symbols_total", 0u) == capture.size();
  })) << model.dump()
      << daemon.Log();
  EXPECT_EQ(daemon.Metric("codedrift_records_total", {"stream=\"uplink\""}), 3000.0);
  EXPECT_EQ(daemon.Metric("codedrift_bytes_total", {"stream=\"uplink\""}),
            static_cast<double>(capture.size()));
  ASSERT_EQ(model["window_symbols"].get<uint64_t>(), 20000u);

  dir.Write("tail.log", capture.substr(capture.size() - 20000));
  const auto inspected = RunCommand(CliPath() + " inspect --json --table " +
                                    dir.File("probe.table") + " " + dir.File("tail.log"));
  ASSERT_EQ(inspected.exit_code, 0) << inspected.out;
  const auto expected = nlohmann::json::parse(inspected.out);
  EXPECT_TRUE(NearlyEqual(model["entropy_bits"], expected["entropy_bits"]));
  EXPECT_TRUE(NearlyEqual(model["entropy_mm_bits"], expected["entropy_mm_bits"]));
  EXPECT_TRUE(NearlyEqual(model["entropy_stderr_bits"], expected["entropy_stderr_bits"]));
  EXPECT_TRUE(NearlyEqual(model["deployed_mean_bits"], expected["deployed_mean_bits"]));
  EXPECT_TRUE(NearlyEqual(model["redundancy_bits"], expected["redundancy_bits"]));
  EXPECT_TRUE(NearlyEqual(model["kraft_sum"], expected["kraft_sum"]));

  // /metrics agrees with the JSON API.
  const std::vector<std::string> labels = {"stream=\"uplink\"", "model=\"bytes\""};
  auto plugin = labels;
  plugin.push_back("estimator=\"plugin\"");
  auto deployed = labels;
  deployed.push_back("code=\"deployed\"");
  const auto metric_entropy = daemon.Metric("codedrift_entropy_bits_per_symbol", plugin);
  const auto metric_deployed = daemon.Metric("codedrift_code_mean_bits_per_symbol", deployed);
  ASSERT_TRUE(metric_entropy && metric_deployed);
  EXPECT_TRUE(NearlyEqual(*metric_entropy, expected["entropy_bits"]));
  EXPECT_TRUE(NearlyEqual(*metric_deployed, expected["deployed_mean_bits"]));
  EXPECT_EQ(daemon.Metric("codedrift_window_symbols", labels), 20000.0);
  EXPECT_EQ(daemon.Stop(), 0) << daemon.Log();
}

std::string Frames(const std::vector<std::string>& records, int prefix_bytes) {
  std::string out;
  for (const auto& r : records) {
    for (int i = prefix_bytes - 1; i >= 0; --i)
      out += static_cast<char>((r.size() >> (8 * i)) & 0xff);
    out += r;
  }
  return out;
}

TEST(DaemonIngest, LengthPrefixedUdpAndUnixStreamsCountExactly) {
  TempDir dir;
  const std::string socket_path = dir.File("ingest.sock");
  DaemonProcess daemon(dir, Config(R"(  - name: short
    listen: tcp://127.0.0.1:0
    framing: u16be
    models: [{name: bytes, symbols: {kind: bytes}, window: {symbols: 100000}}]
  - name: long
    listen: tcp://127.0.0.1:0
    framing: u32be
    models: [{name: bytes, symbols: {kind: bytes}, window: {symbols: 100000}}]
  - name: packets
    listen: udp://127.0.0.1:0
    models: [{name: bytes, symbols: {kind: bytes}, window: {symbols: 100000}}]
  - name: local
    listen: unix://)" + socket_path +
                                   R"(
    framing: lines
    models: [{name: tokens, symbols: {kind: tokens}, window: {symbols: 100000}}]
)"));
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  std::vector<std::string> records;
  uint64_t payload = 0;
  std::mt19937_64 rng(3);
  for (int i = 0; i < 500; ++i) {
    std::string r(rng() % 300, '\0');
    for (char& c : r) c = static_cast<char>(rng());  // binary: NULs and invalid UTF-8 too
    payload += r.size();
    records.push_back(r);
  }
  SendTcp(daemon.stream_port("short"), Frames(records, 2));
  SendTcp(daemon.stream_port("long"), Frames(records, 4));
  std::vector<std::string> datagrams(records.begin(), records.begin() + 100);
  for (auto& d : datagrams) d += "x";  // no empty datagrams
  SendUdp(daemon.stream_port("packets"), datagrams);
  SendUnix(socket_path, "temp=14 ok\ntemp=15 ok\n");

  for (const std::string stream : {"short", "long"}) {
    EXPECT_TRUE(WaitFor([&] {
      return daemon.Metric("codedrift_symbols_total", {"stream=\"" + stream + "\""}) ==
             static_cast<double>(payload);
    })) << stream
        << daemon.Log();
    EXPECT_EQ(daemon.Metric("codedrift_records_total", {"stream=\"" + stream + "\""}), 500.0);
  }
  EXPECT_TRUE(WaitFor(
      [&] { return daemon.Metric("codedrift_records_total", {"stream=\"packets\""}) == 100.0; }));
  // Tokens: temp 14 ok <end> temp 15 ok <end>.
  EXPECT_TRUE(WaitFor([&] {
    return daemon.Metric("codedrift_symbols_total", {"stream=\"local\""}) == 8.0;
  })) << daemon.Log();
  EXPECT_EQ(daemon.Stop(), 0);
}

TEST(DaemonIngest, ConcurrentConnectionsFeedOneModel) {
  TempDir dir;
  DaemonProcess daemon(dir, Config(R"(  - name: uplink
    listen: tcp://127.0.0.1:0
    models: [{name: bytes, symbols: {kind: bytes}, window: {symbols: 1000000}}]
)"));
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  std::vector<std::thread> senders;
  uint64_t bytes = 0;
  std::vector<std::string> captures;
  for (int i = 0; i < 8; ++i) {
    captures.push_back(ProbeLines(10 + i, 2000));
    bytes += captures.back().size();
  }
  for (const auto& capture : captures) {
    senders.emplace_back([&daemon, &capture] { SendTcp(daemon.stream_port("uplink"), capture); });
  }
  for (auto& t : senders) t.join();
  EXPECT_TRUE(WaitFor([&] {
    return daemon.Metric("codedrift_symbols_total", {"stream=\"uplink\""}) ==
           static_cast<double>(bytes);
  })) << daemon.Log();
  EXPECT_EQ(daemon.Metric("codedrift_records_total", {"stream=\"uplink\""}), 16000.0);
  EXPECT_EQ(daemon.Stop(), 0);
}

}  // namespace
}  // namespace codedrift::testing
