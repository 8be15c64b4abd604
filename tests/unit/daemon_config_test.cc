// Daemon config: defaults, paths, the embedded default, and every error with its exact
// message and 1-based line:column (positions counted by hand from the YAML text beside each
// case). Config texts are invented for the tests.
#include "codedrift/daemon_config.h"

#include <filesystem>
#include <fstream>
#include <string>

#include <gtest/gtest.h>

#include <arpa/inet.h>

namespace codedrift {
namespace {

using std::chrono::hours;
using std::chrono::milliseconds;
using std::chrono::minutes;
using std::chrono::seconds;

// Lines 1-6. Stream keys appended after it start at line 7, column 5; model keys at line 7,
// column 9; top-level keys at line 7, column 1.
constexpr std::string_view kOneStream = R"(streams:
  - name: up
    listen: tcp://127.0.0.1:7071
    models:
      - name: m
        symbols: {kind: bytes}
)";

// kOneStream without its symbols line (line 6 is free).
constexpr std::string_view kStreamHead = R"(streams:
  - name: up
    listen: tcp://127.0.0.1:7071
    models:
      - name: m
)";

std::string With(std::string_view head, std::string_view tail) {
  return std::string(head) + std::string(tail);
}

// The listen URL's value sits at line 3, column 13.
std::string StreamListening(std::string_view url) {
  return "streams:\n  - name: up\n    listen: " + std::string(url) +
         "\n    models:\n      - name: m\n        symbols: {kind: bytes}\n";
}

std::string ErrorOf(std::string_view text, std::string_view file_name = "demo.yaml") {
  Result<DaemonConfig> config = ParseDaemonConfig(text, file_name);
  return config.ok() ? "(no error)" : config.error().message;
}

DaemonConfig ParseOk(std::string_view text, std::string_view file_name = "demo.yaml") {
  Result<DaemonConfig> config = ParseDaemonConfig(text, file_name);
  EXPECT_TRUE(config.ok()) << config.error().message;
  return config.ok() ? config.value() : DaemonConfig{};
}

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

TEST(DaemonConfigErrors, UnknownAndDuplicateKeys) {
  EXPECT_EQ(ErrorOf(With(kOneStream, "        windw: {symbols: 10}\n")),
            "demo.yaml:7:9: unknown key 'windw' in model (did you mean 'window'?)");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        colour: red\n")),
            "demo.yaml:7:9: unknown key 'colour' in model, expected name, symbols, window, "
            "table, alert, export_counts or orders");
  EXPECT_EQ(ErrorOf(With(kOneStream, "colour: red\n")),
            "demo.yaml:7:1: unknown key 'colour' in config, expected http, state_dir, "
            "evaluate_every, checkpoint_every, streams or alerts");
  EXPECT_EQ(ErrorOf(With(kOneStream, "    framng: lines\n")),
            "demo.yaml:7:5: unknown key 'framng' in stream (did you mean 'framing'?)");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        name: again\n")),
            "demo.yaml:7:9: duplicate key 'name' in model, expected each key once (first at "
            "line 5)");
  EXPECT_EQ(ErrorOf(With(kOneStream, "alerts: {lgo: true}\n")),
            "demo.yaml:7:10: unknown key 'lgo' in alerts (did you mean 'log'?)");
}

TEST(DaemonConfigErrors, MissingRequiredKeys) {
  EXPECT_EQ(ErrorOf("streams:\n  - name: up\n    models:\n      - name: m\n"
                    "        symbols: {kind: bytes}\n"),
            "demo.yaml:2:5: missing required key 'listen' in stream");
  EXPECT_EQ(ErrorOf(kStreamHead), "demo.yaml:5:9: missing required key 'symbols' in model");
  EXPECT_EQ(ErrorOf(With(kStreamHead, "        symbols: {block: 2}\n")),
            "demo.yaml:6:18: missing required key 'kind' in symbols");
  EXPECT_EQ(ErrorOf("evaluate_every: 5s\n"),
            "demo.yaml:1:1: missing required key 'streams' in config");
  EXPECT_EQ(ErrorOf(With(kOneStream, "alerts: {webhook: {timeout: 2s}}\n")),
            "demo.yaml:7:19: missing required key 'url' in webhook");
}

TEST(DaemonConfigErrors, BadTypes) {
  EXPECT_EQ(ErrorOf(With(kOneStream, "http: [1]\n")),
            "demo.yaml:7:7: http: expected a mapping, got a list");
  EXPECT_EQ(ErrorOf(With(kOneStream, "    max_record_bytes: lots\n")),
            "demo.yaml:7:23: max_record_bytes: expected a whole number 1..16777216, got 'lots'");
  EXPECT_EQ(ErrorOf(With(kOneStream, "    max_connections: \"10\"\n")),
            "demo.yaml:7:22: max_connections: expected a whole number 1..65536, got the quoted "
            "string '10'");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        export_counts: yes\n")),
            "demo.yaml:7:24: export_counts: expected true or false, got 'yes'");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        table: \"\"\n")),
            "demo.yaml:7:16: table: expected a file path, got the quoted string ''");
  EXPECT_EQ(ErrorOf("streams: {name: up}\n"),
            "demo.yaml:1:10: streams: expected a list, got a mapping");
  EXPECT_EQ(ErrorOf("streams: []\n"),
            "demo.yaml:1:10: streams: the list is empty, expected at least one stream");
  EXPECT_EQ(ErrorOf("streams:\n  - name: Up Link\n    listen: tcp://127.0.0.1:7071\n"
                    "    models:\n      - name: m\n        symbols: {kind: bytes}\n"),
            "demo.yaml:2:11: name: 'Up Link' is not a valid name, expected 1 to 64 characters "
            "from a-z, 0-9, _ and -");
}

TEST(DaemonConfigErrors, OutOfRangeNumbers) {
  EXPECT_EQ(ErrorOf(With(kOneStream, "    max_record_bytes: 0\n")),
            "demo.yaml:7:23: max_record_bytes: 0 is out of range, expected 1..16777216");
  EXPECT_EQ(ErrorOf(With(kOneStream, "    max_record_bytes: 16777217\n")),
            "demo.yaml:7:23: max_record_bytes: 16777217 is out of range, expected 1..16777216");
  EXPECT_EQ(
      ParseOk(With(kOneStream, "    max_record_bytes: 16777216\n")).streams[0].max_record_bytes,
      16u << 20);
  EXPECT_EQ(ErrorOf(With(kOneStream, "        orders: [5]\n")),
            "demo.yaml:7:18: orders: 5 is out of range, expected 1..4");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        orders: [1, 1]\n")),
            "demo.yaml:7:21: orders: order 1 is listed twice, expected each once");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        orders: [1, 2, 3, 4, 1]\n")),
            "demo.yaml:7:17: orders: the list has 5 items, expected at most 4");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        orders: []\n")),
            "demo.yaml:7:17: orders: the list is empty, expected at least one order, e.g. [1]");
}

TEST(DaemonConfigErrors, BadDurations) {
  constexpr std::string_view kForm =
      "expected a whole number and a unit (ms, s, m, h or d), e.g. 500ms, 5s, 10m, 1h, 1d";
  EXPECT_EQ(ErrorOf(With(kOneStream, "evaluate_every: 5\n")),
            "demo.yaml:7:17: evaluate_every: bad duration '5', " + std::string(kForm));
  EXPECT_EQ(ErrorOf(With(kOneStream, "    idle_timeout: 5 m\n")),
            "demo.yaml:7:19: idle_timeout: bad duration '5 m', " + std::string(kForm));
  EXPECT_EQ(ErrorOf(With(kOneStream, "        window: {span: 1.5m}\n")),
            "demo.yaml:7:24: span: bad duration '1.5m', " + std::string(kForm));
  EXPECT_EQ(ErrorOf(With(kOneStream, "evaluate_every: 50ms\n")),
            "demo.yaml:7:17: evaluate_every: 50ms is too short, expected at least 100ms");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        window: {span: 500ms}\n")),
            "demo.yaml:7:24: span: 500ms is too short, expected at least 1s");
  EXPECT_EQ(ErrorOf(With(kOneStream, "checkpoint_every: 400d\n")),
            "demo.yaml:7:19: checkpoint_every: duration '400d' is too long, expected at most "
            "365d");
}

TEST(DaemonConfigErrors, BadPercentages) {
  constexpr std::string_view kForm =
      "expected a percentage like 5% or a ratio from 0 to 1 like 0.05";
  EXPECT_EQ(ErrorOf(With(kOneStream, "        alert: {saving: 5}\n")),
            "demo.yaml:7:25: saving: '5' is more than 100%, " + std::string(kForm));
  EXPECT_EQ(ErrorOf(With(kOneStream, "        alert: {saving: five%}\n")),
            "demo.yaml:7:25: saving: bad percentage 'five%', " + std::string(kForm));
  EXPECT_EQ(ErrorOf(With(kOneStream, "        alert: {saving: -5%}\n")),
            "demo.yaml:7:25: saving: bad percentage '-5%', " + std::string(kForm));
  EXPECT_EQ(ErrorOf(With(kOneStream, "        alert: {saving: 0%}\n")),
            "demo.yaml:7:25: saving: 0% is out of range, expected more than 0% and less than "
            "100% (a ratio between 0 and 1)");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        alert: {confidence: 1.5}\n")),
            "demo.yaml:7:29: confidence: '1.5' is more than 100%, " + std::string(kForm));
}

TEST(DaemonConfigErrors, BadCidrs) {
  EXPECT_EQ(ErrorOf(With(kOneStream, "    allow: [10.0.0.0/33]\n")),
            "demo.yaml:7:13: allow: bad CIDR '10.0.0.0/33': prefix length '33' is out of "
            "range, expected 0..32");
  EXPECT_EQ(ErrorOf(With(kOneStream, "    allow: [10.0.0.1/8]\n")),
            "demo.yaml:7:13: allow: bad CIDR '10.0.0.1/8': bits are set below the /8 prefix, "
            "expected 10.0.0.0/8");
  EXPECT_EQ(ErrorOf(With(kOneStream, "    allow: [\"fe80::1/10\"]\n")),
            "demo.yaml:7:13: allow: bad CIDR 'fe80::1/10': bits are set below the /10 prefix, "
            "expected fe80::/10");
  EXPECT_EQ(ErrorOf(With(kOneStream, "    allow: [\"::1/129\"]\n")),
            "demo.yaml:7:13: allow: bad CIDR '::1/129': prefix length '129' is out of range, "
            "expected 0..128");
  EXPECT_EQ(ErrorOf(With(kOneStream, "    allow: [localhost]\n")),
            "demo.yaml:7:13: allow: bad CIDR 'localhost', expected an IPv4 or IPv6 address "
            "with an optional /prefix, e.g. 10.0.0.0/8 or fd00::/8");
  EXPECT_EQ(ErrorOf(With(kOneStream, "    allow: []\n")),
            "demo.yaml:7:12: allow: the list is empty, so no peer could connect, expected at "
            "least one CIDR (0.0.0.0/0 and ::/0 admit everyone)");
}

TEST(DaemonConfigErrors, BadListenUrls) {
  const std::string form = ", expected tcp://HOST:PORT, udp://HOST:PORT or unix:///PATH";
  EXPECT_EQ(
      ErrorOf(StreamListening("tcp:/127.0.0.1:7071")),
      "demo.yaml:3:13: listen: bad listen URL 'tcp:/127.0.0.1:7071': it has no scheme" + form);
  EXPECT_EQ(ErrorOf(StreamListening("http://127.0.0.1:7071")),
            "demo.yaml:3:13: listen: bad listen URL 'http://127.0.0.1:7071': unknown scheme "
            "'http'" +
                form);
  EXPECT_EQ(ErrorOf(StreamListening("tcp://127.0.0.1")),
            "demo.yaml:3:13: listen: bad listen URL 'tcp://127.0.0.1': the port is missing" + form);
  EXPECT_EQ(ErrorOf(StreamListening("tcp://::1:7071")),
            "demo.yaml:3:13: listen: bad listen URL 'tcp://::1:7071': an IPv6 address needs "
            "brackets, as in [::1]" +
                form);
  EXPECT_EQ(ErrorOf(StreamListening("tcp://127.0.0.1:70000")),
            "demo.yaml:3:13: listen: bad listen URL 'tcp://127.0.0.1:70000': port '70000' is "
            "not a number from 0 to 65535" +
                form);
  EXPECT_EQ(ErrorOf(StreamListening("tcp://300.1.2.3:7071")),
            "demo.yaml:3:13: listen: bad listen URL 'tcp://300.1.2.3:7071': '300.1.2.3' is no "
            "IPv4 address" +
                form);
  EXPECT_EQ(ErrorOf(StreamListening("unix://run/up.sock")),
            "demo.yaml:3:13: listen: bad listen URL 'unix://run/up.sock': the socket path must "
            "be absolute" +
                form);
  EXPECT_EQ(ErrorOf(With(kOneStream, "http: {listen: 127.0.0.1}\n")),
            "demo.yaml:7:16: listen: bad address '127.0.0.1': the port is missing, expected "
            "HOST:PORT, e.g. 127.0.0.1:7070 or [::1]:7070");
  EXPECT_EQ(ErrorOf(With(kOneStream, "alerts: {webhook: {url: \"https://x/hook\"}}\n")),
            "demo.yaml:7:25: url: bad URL 'https://x/hook': https is not supported, expected "
            "http://HOST[:PORT][/PATH]");
}

TEST(DaemonConfigErrors, DuplicateNamesAndAddresses) {
  EXPECT_EQ(ErrorOf(With(kOneStream, "      - name: m\n        symbols: {kind: bytes}\n")),
            "demo.yaml:7:15: duplicate model name 'm' in stream 'up', expected unique names "
            "(first at line 5)");
  EXPECT_EQ(ErrorOf(With(kOneStream,
                         "  - name: up\n    listen: tcp://127.0.0.1:7075\n    models:\n"
                         "      - name: m\n        symbols: {kind: bytes}\n")),
            "demo.yaml:7:11: duplicate stream name 'up', expected unique names (first at line "
            "2)");
  EXPECT_EQ(ErrorOf(With(kOneStream,
                         "  - name: second\n    listen: tcp://127.0.0.1:7071\n    models:\n"
                         "      - name: m\n        symbols: {kind: bytes}\n")),
            "demo.yaml:8:13: listen: tcp://127.0.0.1:7071 is already used by stream 'up', "
            "expected a different address or port");
  EXPECT_EQ(ErrorOf(StreamListening("tcp://127.0.0.1:7070")),
            "demo.yaml:3:13: listen: tcp://127.0.0.1:7070 is already used by the HTTP server, "
            "expected a different address or port");
  // The same port over udp is a different socket.
  EXPECT_EQ(ErrorOf(StreamListening("udp://127.0.0.1:7070")), "(no error)");
}

TEST(DaemonConfigErrors, FramingMustSuitTheScheme) {
  EXPECT_EQ(ErrorOf(With(kOneStream, "    framing: datagram\n")),
            "demo.yaml:7:14: framing: 'datagram' framing is not allowed for tcp streams, "
            "expected lines, u16be or u32be");
  EXPECT_EQ(ErrorOf(StreamListening("udp://127.0.0.1:7072") + "    framing: lines\n"),
            "demo.yaml:7:14: framing: 'lines' framing is not allowed for udp streams, expected "
            "datagram");
  EXPECT_EQ(ErrorOf(With(kOneStream, "    framing: lnes\n")),
            "demo.yaml:7:14: framing: unknown value 'lnes' (did you mean 'lines'?)");
  EXPECT_EQ(
      ParseOk(StreamListening("unix:///run/up.sock") + "    framing: u32be\n").streams[0].framing,
      Framing::kU32be);
}

TEST(DaemonConfigErrors, KeysThatDoNotApply) {
  EXPECT_EQ(ErrorOf(With(kOneStream, "    receive_buffer_bytes: 1048576\n")),
            "demo.yaml:7:5: key 'receive_buffer_bytes' does not apply to tcp streams, expected "
            "it only with udp");
  EXPECT_EQ(ErrorOf(StreamListening("udp://127.0.0.1:7072") + "    max_connections: 4\n"),
            "demo.yaml:7:5: key 'max_connections' does not apply to udp streams, expected it "
            "only with tcp or unix");
  EXPECT_EQ(ErrorOf(StreamListening("unix:///run/up.sock") + "    allow: [10.0.0.0/8]\n"),
            "demo.yaml:7:5: key 'allow' does not apply to unix streams (peers have no address; "
            "use the socket file's permissions), expected it only with tcp or udp");
  EXPECT_EQ(ErrorOf(With(kOneStream, "    framing: u32be\n    overlong: drop\n")),
            "demo.yaml:8:5: key 'overlong' does not apply to u32be framing (an oversized frame "
            "closes the connection), expected it only with lines or datagram framing");
  EXPECT_EQ(ErrorOf(With(kStreamHead, "        symbols: {kind: tokens, block: 2}\n")),
            "demo.yaml:6:33: key 'block' does not apply to symbols of kind tokens, expected "
            "delimiters, mask_digits or max_distinct");
}

TEST(DaemonConfigErrors, SymbolsAndWindowRules) {
  EXPECT_EQ(ErrorOf(With(kStreamHead, "        symbols: {kind: bites}\n")),
            "demo.yaml:6:25: kind: unknown value 'bites' (did you mean 'bytes'?)");
  EXPECT_EQ(ErrorOf(With(kStreamHead, "        symbols: {kind: field, width_bits: 33}\n")),
            "demo.yaml:6:44: width_bits: 33 is out of range, expected 1..32");
  EXPECT_EQ(ErrorOf(With(kStreamHead,
                         "        symbols: {kind: field, offset_bits: 524280, width_bits: 16}\n")),
            "demo.yaml:6:18: symbols: the field ends at bit 524296, beyond the stream's "
            "max_record_bytes 65536, expected offset_bits + width_bits <= 524288");
  EXPECT_EQ(
      ErrorOf(With(kStreamHead, "        symbols: {kind: tokens}\n        export_counts: true\n")),
      "demo.yaml:7:24: export_counts: the tokens alphabet is too large to export "
      "per-symbol counts, expected it only for alphabets of at most 4096 symbols (bytes, "
      "field up to 12 bits, tokens with max_distinct up to 4096)");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        window: {symbols: 10, span: 1m}\n")),
            "demo.yaml:7:17: window: both 'symbols' and 'span' given, expected one of them");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        window: {buckets: 10}\n")),
            "demo.yaml:7:17: window: missing 'symbols' or 'span', expected one of them");
  EXPECT_EQ(ErrorOf(With(kOneStream, "        window: {symbols: 10, buckets: 20}\n")),
            "demo.yaml:7:40: buckets: 20 is more than the window's 10 symbols, expected at most "
            "10");
  EXPECT_EQ(ErrorOf(With(kOneStream,
                         "        window: {symbols: 10}\n        alert: {min_symbols: 11}\n")),
            "demo.yaml:8:30: min_symbols: 11 is more than the window's 10 symbols, so the alert "
            "could never fire, expected at most 10");
}

TEST(DaemonConfigErrors, YamlProblems) {
  EXPECT_EQ(ErrorOf(""),
            "demo.yaml:1:1: the config is empty, expected a mapping with at least "
            "'streams'");
  EXPECT_EQ(ErrorOf("# nothing but a comment\n"),
            "demo.yaml:1:1: the config is empty, expected a mapping with at least 'streams'");
  EXPECT_EQ(ErrorOf("- a\n"), "demo.yaml:1:1: config: expected a mapping, got a list");
  EXPECT_EQ(ErrorOf("streams: [\n"),
            "demo.yaml:2:1: YAML syntax error: end of sequence flow not found");
  EXPECT_EQ(ErrorOf(With(kOneStream, "---\nstreams: []\n")),
            "demo.yaml:7:1: a second YAML document starts here, expected a single document");
  // yaml-cpp 0.7's LoadAll never returns on these (yaml-cpp issue #1040).
  EXPECT_EQ(ErrorOf(","), "demo.yaml:1:1: YAML syntax error: unexpected ',', expected a value");
  EXPECT_EQ(ErrorOf("- a\n- b\n,\n"),
            "demo.yaml:3:1: YAML syntax error: unexpected ',', expected a value");
}

TEST(DaemonConfigErrors, AliasesCannotMultiplyListsBeyondTheLimits) {
  // One stream named 272 times through an alias: a short file, a long list.
  std::string text =
      "x: &s {name: s, listen: tcp://127.0.0.1:1, models: [{name: m, symbols: "
      "{kind: bytes}}]}\nstreams: [";
  for (int i = 0; i < 272; ++i) text += i == 0 ? "*s" : ", *s";
  text += "]\n";
  EXPECT_EQ(ErrorOf(text),
            "demo.yaml:1:1: unknown key 'x' in config, expected http, state_dir, "
            "evaluate_every, checkpoint_every, streams or alerts\n"
            "demo.yaml:2:10: streams: the list has 272 items, expected at most 256");
}

TEST(DaemonConfigErrors, EveryErrorIsReportedOnItsOwnLine) {
  EXPECT_EQ(ErrorOf(With(kOneStream, "        windw: {symbols: 10}\nevaluate_every: 5\n")),
            "demo.yaml:7:9: unknown key 'windw' in model (did you mean 'window'?)\n"
            "demo.yaml:8:17: evaluate_every: bad duration '5', expected a whole number and a "
            "unit (ms, s, m, h or d), e.g. 500ms, 5s, 10m, 1h, 1d");
}

TEST(DaemonConfigErrors, HostileTextIsQuotedSafely) {
  EXPECT_EQ(ErrorOf(With(kOneStream, "        \"a\\x01b\": 1\n")),
            "demo.yaml:7:9: unknown key 'a\\x01b' in model, expected name, symbols, window, "
            "table, alert, export_counts or orders");
}

// Address bytes as the kernel hands them over (inet_pton is glibc's parser, not ours).
std::vector<uint8_t> Ip(const char* text) {
  std::vector<uint8_t> bytes(16);
  if (inet_pton(AF_INET, text, bytes.data()) == 1) {
    bytes.resize(4);
  } else {
    EXPECT_EQ(inet_pton(AF_INET6, text, bytes.data()), 1) << text;
  }
  return bytes;
}

bool Contains(const char* cidr, const char* address) {
  Result<Cidr> rule = Cidr::Parse(cidr);
  EXPECT_TRUE(rule.ok()) << cidr;
  return rule.ok() && rule.value().Contains(Ip(address));
}

// Prefix semantics per RFC 4632 section 3.1; loopback 127.0.0.0/8 per RFC 1122 section
// 3.2.1.3 and ::1 per RFC 4291 section 2.5.3; IPv4-mapped ::ffff:a.b.c.d per RFC 4291
// section 2.5.5.2 (section numbers from memory).
TEST(Cidr, ContainsIpv4EdgeCases) {
  EXPECT_TRUE(Contains("127.0.0.0/8", "127.0.0.1"));
  EXPECT_TRUE(Contains("127.0.0.0/8", "127.255.255.255"));
  EXPECT_FALSE(Contains("127.0.0.0/8", "128.0.0.0"));
  EXPECT_FALSE(Contains("127.0.0.0/8", "126.255.255.255"));
  EXPECT_TRUE(Contains("10.0.0.0/9", "10.127.255.255"));  // prefix inside a byte
  EXPECT_FALSE(Contains("10.0.0.0/9", "10.128.0.0"));
  EXPECT_TRUE(Contains("192.168.1.7/32", "192.168.1.7"));
  EXPECT_FALSE(Contains("192.168.1.7/32", "192.168.1.6"));
  EXPECT_TRUE(Contains("192.168.1.7", "192.168.1.7"));  // bare address: /32
  EXPECT_TRUE(Contains("0.0.0.0/0", "255.255.255.255"));
  EXPECT_FALSE(Contains("0.0.0.0/0", "2001:db8::1"));  // a v6 peer is not a v4 peer
}

TEST(Cidr, ContainsIpv6EdgeCases) {
  EXPECT_TRUE(Contains("::1/128", "::1"));
  EXPECT_FALSE(Contains("::1/128", "::2"));
  EXPECT_TRUE(Contains("fe80::/10", "febf:ffff::1"));
  EXPECT_FALSE(Contains("fe80::/10", "fec0::1"));
  EXPECT_TRUE(Contains("2001:db8::/32", "2001:db8:ffff::"));
  EXPECT_FALSE(Contains("2001:db8::/32", "2001:db9::"));
  EXPECT_TRUE(Contains("::/0", "ffff:ffff:ffff:ffff:ffff:ffff:ffff:ffff"));
}

TEST(Cidr, MappedAddressesMatchAcrossFamilies) {
  EXPECT_TRUE(Contains("127.0.0.0/8", "::ffff:127.0.0.1"));
  EXPECT_FALSE(Contains("127.0.0.0/8", "::ffff:10.0.0.1"));
  EXPECT_FALSE(Contains("127.0.0.0/8", "::127.0.0.1"));  // IPv4-compatible is not mapped
  EXPECT_TRUE(Contains("::ffff:0:0/96", "10.1.2.3"));
  EXPECT_TRUE(Contains("::/0", "10.1.2.3"));
  EXPECT_FALSE(Contains("::1/128", "127.0.0.1"));
}

TEST(Cidr, OtherAddressSizesNeverMatch) {
  const Cidr everything = Cidr::Parse("0.0.0.0/0").value();
  EXPECT_FALSE(everything.Contains(std::vector<uint8_t>{}));
  EXPECT_FALSE(everything.Contains(std::vector<uint8_t>(5, 0)));
  EXPECT_FALSE(Cidr::Parse("::/0").value().Contains(std::vector<uint8_t>(8, 0)));
}

TEST(Cidr, DefaultAllowListIsLoopbackOnly) {
  const StreamConfig stream = ParseOk(kOneStream).streams.at(0);
  EXPECT_TRUE(stream.Allows(Ip("127.0.0.1")));
  EXPECT_TRUE(stream.Allows(Ip("::1")));
  EXPECT_TRUE(stream.Allows(Ip("::ffff:127.0.0.2")));
  EXPECT_FALSE(stream.Allows(Ip("10.0.0.1")));
  EXPECT_FALSE(stream.Allows(Ip("::2")));
}

TEST(ConfigValues, DurationsTakeOneWholeNumberAndUnit) {
  EXPECT_EQ(ParseDuration("500ms").value(), milliseconds(500));
  EXPECT_EQ(ParseDuration("5s").value(), seconds(5));
  EXPECT_EQ(ParseDuration("10m").value(), minutes(10));
  EXPECT_EQ(ParseDuration("1h").value(), hours(1));
  EXPECT_EQ(ParseDuration("1d").value(), hours(24));
  EXPECT_EQ(ParseDuration("0s").value(), milliseconds(0));
  EXPECT_EQ(ParseDuration("365d").value(), kMaxConfigDuration);
  for (const char* bad : {"", "5", "s", "1.5s", "-1s", "+1s", "5 s", " 5s", "5S", "5sec", "1w",
                          "1h30m", "366d", "99999999999999999999999s"}) {
    EXPECT_FALSE(ParseDuration(bad).ok()) << bad;
  }
}

TEST(ConfigValues, DurationsPrintInTheLargestExactUnit) {
  EXPECT_EQ(FormatDuration(hours(48)), "2d");
  EXPECT_EQ(FormatDuration(minutes(90)), "90m");
  EXPECT_EQ(FormatDuration(milliseconds(1500)), "1500ms");
  EXPECT_EQ(FormatDuration(milliseconds(0)), "0s");
  for (const char* text : {"7d", "23h", "59m", "61s", "999ms"}) {
    EXPECT_EQ(FormatDuration(ParseDuration(text).value()), text);
  }
}

TEST(ConfigValues, RatiosArePercentagesOrFractions) {
  EXPECT_DOUBLE_EQ(ParseRatio("5%").value(), 0.05);
  EXPECT_DOUBLE_EQ(ParseRatio("2.5%").value(), 0.025);
  EXPECT_DOUBLE_EQ(ParseRatio("0.05").value(), 0.05);
  EXPECT_DOUBLE_EQ(ParseRatio("100%").value(), 1.0);
  EXPECT_DOUBLE_EQ(ParseRatio("0").value(), 0.0);
  for (const char* bad :
       {"", "%", "5", "101%", "-5%", "1e-2", "nan", "inf", ".5", "5.", "5 %", "0x1"}) {
    EXPECT_FALSE(ParseRatio(bad).ok()) << bad;
  }
}

TEST(ConfigValues, ListenUrlsRoundTrip) {
  for (const char* url : {"tcp://127.0.0.1:7071", "udp://[::1]:7072", "tcp://localhost:0",
                          "unix:///run/codedrift/up.sock", "udp://[fe80::1]:9"}) {
    Result<ListenAddress> address = ListenAddress::Parse(url);
    ASSERT_TRUE(address.ok()) << address.error().message;
    EXPECT_EQ(address.value().ToString(), url);
  }
  const ListenAddress v6 = ListenAddress::Parse("udp://[::1]:7072").value();
  EXPECT_EQ(v6.scheme, ListenScheme::kUdp);
  EXPECT_EQ(v6.host, "::1");
  EXPECT_EQ(v6.port, 7072);
  EXPECT_FALSE(ListenAddress::Parse("tcp://[::1:7072").ok());
  EXPECT_FALSE(ListenAddress::Parse("tcp://[::1]7072").ok());
  EXPECT_FALSE(ListenAddress::Parse("tcp://:7072").ok());
  EXPECT_FALSE(ListenAddress::Parse("tcp://host:").ok());
  EXPECT_FALSE(ListenAddress::Parse("unix:///" + std::string(107, 'x')).ok());
}

TEST(ConfigValues, HostPortAndWebhookUrls) {
  EXPECT_EQ(HostPort::Parse("[::1]:7070").value(), (HostPort{"::1", 7070}));
  EXPECT_EQ(HostPort::Parse("[::1]:7070").value().ToString(), "[::1]:7070");
  EXPECT_FALSE(HostPort::Parse("[::1]").ok());
  const HttpUrl plain = HttpUrl::Parse("http://alerts.example").value();
  EXPECT_EQ(plain.host, "alerts.example");
  EXPECT_EQ(plain.port, 80);
  EXPECT_EQ(plain.target, "/");
  const HttpUrl query = HttpUrl::Parse("http://[::1]:9000?key=v").value();
  EXPECT_EQ(query.host, "::1");
  EXPECT_EQ(query.port, 9000);
  EXPECT_EQ(query.target, "/?key=v");
  EXPECT_FALSE(HttpUrl::Parse("http://user@host/").ok());
  EXPECT_FALSE(HttpUrl::Parse("http://host/a b").ok());
  EXPECT_FALSE(HttpUrl::Parse("ftp://host/").ok());
}

}  // namespace
}  // namespace codedrift
