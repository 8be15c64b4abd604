// Daemon config: defaults, values read, relative paths, the embedded default and the design's
// example config. Errors are in daemon_config_errors_test.cc. Config texts are invented.
#include "codedrift/daemon_config.h"

#include <filesystem>
#include <fstream>
#include <string>

#include <gtest/gtest.h>

#include "daemon_config_fixtures.h"
#include "ip_bytes.h"

namespace codedrift {
namespace {

using namespace config_test;  // NOLINT(google-build-using-namespace)

using std::chrono::hours;
using std::chrono::milliseconds;
using std::chrono::minutes;
using std::chrono::seconds;

TEST(DaemonConfig, MinimalConfigGetsTheDocumentedDefaults) {
  const DaemonConfig config = ParseOk(kOneStream);
  EXPECT_EQ(config.file_name, "demo.yaml");
  EXPECT_EQ(config.http.host, "127.0.0.1");
  EXPECT_EQ(config.http.port, 7070);
  EXPECT_EQ(config.http.admin_token_file, "");
  EXPECT_EQ(config.state_dir, "/var/lib/codedrift");
  EXPECT_EQ(config.evaluate_every, seconds(5));
  EXPECT_EQ(config.checkpoint_every, seconds(30));
  EXPECT_TRUE(config.alerts.log);
  EXPECT_FALSE(config.alerts.webhook.has_value());
  ASSERT_EQ(config.streams.size(), 1u);
  const StreamConfig& stream = config.streams[0];
  EXPECT_EQ(stream.name, "up");
  EXPECT_EQ(stream.listen.scheme, ListenScheme::kTcp);
  EXPECT_EQ(stream.listen.host, "127.0.0.1");
  EXPECT_EQ(stream.listen.port, 7071);
  EXPECT_EQ(stream.framing, Framing::kLines);
  EXPECT_EQ(stream.max_record_bytes, 65536u);
  EXPECT_EQ(stream.overlong, OverlongPolicy::kTruncate);
  EXPECT_EQ(stream.max_connections, 256u);
  EXPECT_EQ(stream.idle_timeout, minutes(5));
  EXPECT_EQ(stream.receive_buffer_bytes, 8u << 20);
  ASSERT_EQ(stream.allow.size(), 2u);
  EXPECT_EQ(stream.allow[0].ToString(), "127.0.0.0/8");
  EXPECT_EQ(stream.allow[1].ToString(), "::1/128");
  ASSERT_EQ(stream.models.size(), 1u);
  const ModelConfig& model = stream.models[0];
  EXPECT_EQ(model.name, "m");
  EXPECT_EQ(model.symbols.kind, AlphabetKind::kBytes);
  EXPECT_EQ(model.symbols.block, 1);
  EXPECT_EQ(model.symbols.alphabet().ToString(), "bytes");
  EXPECT_EQ(model.window.kind, WindowKind::kSymbols);
  EXPECT_EQ(model.window.symbols, 1048576u);
  EXPECT_EQ(model.window.buckets, 60u);
  EXPECT_EQ(model.table, "");
  EXPECT_DOUBLE_EQ(model.alert.saving, 0.05);
  EXPECT_EQ(model.alert.for_duration, minutes(10));
  EXPECT_EQ(model.alert.min_symbols, 100000u);
  EXPECT_DOUBLE_EQ(model.alert.confidence, 0.95);
  EXPECT_EQ(model.alert.cooldown, hours(1));
  EXPECT_EQ(model.alert.max_payback, hours(24));
  EXPECT_FALSE(model.export_counts);
  EXPECT_EQ(model.orders, std::vector<int>{1});
}

TEST(DaemonConfig, DefaultsFollowTheScheme) {
  const DaemonConfig udp = ParseOk(StreamListening("udp://[::1]:7072"));
  EXPECT_EQ(udp.streams[0].framing, Framing::kDatagram);
  EXPECT_EQ(udp.streams[0].listen.host, "::1");
  EXPECT_EQ(udp.streams[0].allow.size(), 2u);
  const DaemonConfig unix_socket = ParseOk(StreamListening("unix:///run/codedrift/up.sock"));
  EXPECT_EQ(unix_socket.streams[0].framing, Framing::kLines);
  EXPECT_EQ(unix_socket.streams[0].listen.path, "/run/codedrift/up.sock");
  EXPECT_TRUE(unix_socket.streams[0].allow.empty());
}

TEST(DaemonConfig, SmallCountWindowScalesDefaultBucketsAndMinSymbols) {
  const DaemonConfig config = ParseOk(With(kOneStream, "        window: {symbols: 40}\n"));
  EXPECT_EQ(config.streams[0].models[0].window.buckets, 40u);
  EXPECT_EQ(config.streams[0].models[0].alert.min_symbols, 40u);
}

// The example config of DESIGN.md section 5, verbatim.
TEST(DaemonConfig, DesignExampleParses) {
  constexpr std::string_view kExample =
      R"(http: {listen: 127.0.0.1:7070, admin_token_file: /etc/codedrift/admin.token}
state_dir: /var/lib/codedrift        # checkpoints, history, proposals
evaluate_every: 5s                   # durations: 500ms, 5s, 10m, 1h, 1d
checkpoint_every: 30s                # window state saved to state_dir (atomic); restored on start
streams:
  - name: uplink                     # [a-z0-9_-]{1,64}
    listen: tcp://127.0.0.1:7071     # tcp://, udp://, unix:///path
    framing: lines                   # lines | u16be | u32be (length-prefixed) | datagram (udp)
    max_record_bytes: 65536
    overlong: truncate               # truncate | drop
    max_connections: 256
    allow: [127.0.0.0/8, "::1/128"]
    models:
      - name: bytes
        symbols: {kind: bytes, block: 1}      # tokens: {kind: tokens, delimiters: " =,", mask_digits: true, max_distinct: 65536}
                                              # field:  {kind: field, offset_bits: 32, width_bits: 12, order: big, transform: delta}
        window: {symbols: 1048576}            # or {span: 10m, buckets: 60}
        table: tables/uplink-bytes.table      # relative paths resolve against the config file
        alert: {saving: 5%, for: 10m, min_symbols: 100000, confidence: 0.95, cooldown: 1h, max_payback: 1d}
        export_counts: false                  # true: export per-symbol window counts (fleet merge)
alerts:
  log: true
  webhook: {url: "http://127.0.0.1:9000/hook", timeout: 2s, retries: 5}
)";
  const DaemonConfig config = ParseOk(kExample, "/etc/codedrift/codedrift.yaml");
  EXPECT_EQ(config.http.admin_token_file, "/etc/codedrift/admin.token");
  const ModelConfig& model = config.streams.at(0).models.at(0);
  EXPECT_EQ(model.table, "/etc/codedrift/tables/uplink-bytes.table");
  EXPECT_EQ(model.window.symbols, 1048576u);
  EXPECT_DOUBLE_EQ(model.alert.saving, 0.05);
  EXPECT_EQ(model.alert.max_payback, hours(24));
  ASSERT_TRUE(config.alerts.webhook.has_value());
  EXPECT_EQ(config.alerts.webhook->url, "http://127.0.0.1:9000/hook");
  EXPECT_EQ(config.alerts.webhook->target.host, "127.0.0.1");
  EXPECT_EQ(config.alerts.webhook->target.port, 9000);
  EXPECT_EQ(config.alerts.webhook->target.target, "/hook");
  EXPECT_EQ(config.alerts.webhook->timeout, seconds(2));
  EXPECT_EQ(config.alerts.webhook->retries, 5u);
}

TEST(DaemonConfig, SpelledOutValuesAreRead) {
  const DaemonConfig config = ParseOk(R"(http: {listen: "[::1]:8080"}
evaluate_every: 500ms
checkpoint_every: 1h
streams:
  - name: frames_2
    listen: tcp://0.0.0.0:9000
    framing: u16be
    max_record_bytes: 1024
    max_connections: 8
    idle_timeout: 0s
    allow: [10.0.0.0/8, "fd00::/8", 192.168.1.7]
    models:
      - name: f-1
        symbols: {kind: field, offset_bits: 8, width_bits: 12, order: little, transform: xor}
        window: {span: 1d, buckets: 24}
        alert: {saving: 2.5%, for: 0s, min_symbols: 0, confidence: "99%", cooldown: 90m}
        export_counts: true
        orders: [3, 1, 2]
      - name: t
        symbols: {kind: tokens, delimiters: ";", mask_digits: true, max_distinct: 100}
)");
  EXPECT_EQ(config.http.host, "::1");
  EXPECT_EQ(config.http.port, 8080);
  EXPECT_EQ(config.evaluate_every, milliseconds(500));
  EXPECT_EQ(config.checkpoint_every, hours(1));
  const StreamConfig& stream = config.streams.at(0);
  EXPECT_EQ(stream.framing, Framing::kU16be);
  EXPECT_EQ(stream.max_record_bytes, 1024u);
  EXPECT_EQ(stream.max_connections, 8u);
  EXPECT_EQ(stream.idle_timeout, milliseconds(0));
  ASSERT_EQ(stream.allow.size(), 3u);
  EXPECT_EQ(stream.allow[2].ToString(), "192.168.1.7/32");
  const ModelConfig& field = stream.models.at(0);
  EXPECT_EQ(field.symbols.field.offset_bits, 8u);
  EXPECT_EQ(field.symbols.field.width_bits, 12);
  EXPECT_EQ(field.symbols.field.order, FieldOrder::kLittle);
  EXPECT_EQ(field.symbols.field.transform, FieldTransform::kXor);
  EXPECT_EQ(field.symbols.alphabet().ToString(), "field:12");
  EXPECT_EQ(field.window.kind, WindowKind::kSpan);
  EXPECT_EQ(field.window.span, hours(24));
  EXPECT_EQ(field.window.buckets, 24u);
  EXPECT_DOUBLE_EQ(field.alert.saving, 0.025);
  EXPECT_EQ(field.alert.for_duration, milliseconds(0));
  EXPECT_EQ(field.alert.min_symbols, 0u);
  EXPECT_DOUBLE_EQ(field.alert.confidence, 0.99);
  EXPECT_EQ(field.alert.cooldown, minutes(90));
  EXPECT_TRUE(field.export_counts);
  EXPECT_EQ(field.orders, (std::vector<int>{1, 2, 3}));
  const ModelConfig& tokens = stream.models.at(1);
  EXPECT_EQ(tokens.symbols.kind, AlphabetKind::kTokens);
  EXPECT_EQ(tokens.symbols.tokens.delimiters, ";");
  EXPECT_TRUE(tokens.symbols.tokens.mask_digits);
  EXPECT_EQ(tokens.symbols.tokens.max_distinct, 100u);
}

TEST(DaemonConfig, RelativePathsResolveAgainstTheConfigDirectory) {
  const std::string text = With(kOneStream,
                                "        table: tables/up.table\n"
                                "state_dir: state\n"
                                "http: {admin_token_file: ../secrets/admin.token}\n");
  const DaemonConfig nested = ParseOk(text, "/etc/codedrift/demo.yaml");
  EXPECT_EQ(nested.streams[0].models[0].table, "/etc/codedrift/tables/up.table");
  EXPECT_EQ(nested.state_dir, "/etc/codedrift/state");
  EXPECT_EQ(nested.http.admin_token_file, "/etc/secrets/admin.token");
  const DaemonConfig here = ParseOk(text, "demo.yaml");
  EXPECT_EQ(here.streams[0].models[0].table, "tables/up.table");
  const DaemonConfig absolute =
      ParseOk(With(kOneStream, "        table: /srv/t.table\n"), "/etc/codedrift/demo.yaml");
  EXPECT_EQ(absolute.streams[0].models[0].table, "/srv/t.table");
}

TEST(DaemonConfig, LoadResolvesAgainstTheFilesAbsoluteDirectory) {
  const std::filesystem::path dir =
      std::filesystem::path(::testing::TempDir()) / "daemon_config_load_test";
  std::filesystem::create_directories(dir);
  const std::filesystem::path file = dir / "codedrift.yaml";
  std::ofstream(file) << With(kOneStream, "        table: up.table\n");
  Result<DaemonConfig> config = LoadDaemonConfig(file.string());
  ASSERT_TRUE(config.ok()) << config.error().message;
  EXPECT_EQ(config.value().streams[0].models[0].table,
            (std::filesystem::absolute(dir) / "up.table").lexically_normal().string());
  EXPECT_EQ(config.value().file_name, file.string());

  const std::string missing = (dir / "missing.yaml").string();
  Result<DaemonConfig> absent = LoadDaemonConfig(missing);
  ASSERT_FALSE(absent.ok());
  EXPECT_EQ(absent.error().message,
            missing + ": cannot open the config file, expected a readable YAML file");
  std::filesystem::remove_all(dir);
}

TEST(DaemonConfig, EmbeddedDefaultParses) {
  const DaemonConfig config = ParseOk(EmbeddedDefaultConfig(), "<default>");
  EXPECT_EQ(config.http.host, "127.0.0.1");
  EXPECT_EQ(config.http.port, 7070);
  ASSERT_EQ(config.streams.size(), 2u);
  const StreamConfig& uplink = config.streams[0];
  EXPECT_EQ(uplink.name, "uplink");
  EXPECT_EQ(uplink.listen.ToString(), "tcp://127.0.0.1:7071");
  EXPECT_EQ(uplink.framing, Framing::kLines);
  ASSERT_EQ(uplink.models.size(), 2u);
  EXPECT_EQ(uplink.models[0].symbols.kind, AlphabetKind::kBytes);
  EXPECT_EQ(uplink.models[1].symbols.kind, AlphabetKind::kTokens);
  const StreamConfig& packets = config.streams[1];
  EXPECT_EQ(packets.name, "packets");
  EXPECT_EQ(packets.listen.ToString(), "udp://127.0.0.1:7072");
  EXPECT_EQ(packets.framing, Framing::kDatagram);
  ASSERT_EQ(packets.models.size(), 1u);
  EXPECT_EQ(packets.models[0].symbols.kind, AlphabetKind::kField);
  for (const StreamConfig& stream : config.streams) {
    for (const ModelConfig& model : stream.models) EXPECT_EQ(model.table, "") << model.name;
  }
}

TEST(DaemonConfig, DefaultAllowListIsLoopbackOnly) {
  const StreamConfig stream = ParseOk(kOneStream).streams.at(0);
  EXPECT_TRUE(stream.Allows(Ip("127.0.0.1")));
  EXPECT_TRUE(stream.Allows(Ip("::1")));
  EXPECT_TRUE(stream.Allows(Ip("::ffff:127.0.0.2")));
  EXPECT_FALSE(stream.Allows(Ip("10.0.0.1")));
  EXPECT_FALSE(stream.Allows(Ip("::2")));
}

}  // namespace
}  // namespace codedrift
