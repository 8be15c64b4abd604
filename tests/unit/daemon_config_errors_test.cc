// Daemon config errors: every one with its exact message and 1-based line:column, counted by
// hand from the YAML text beside each case. Config texts are invented for the tests.
#include <string>

#include <gtest/gtest.h>

#include "codedrift/daemon_config.h"

#include "daemon_config_fixtures.h"

namespace codedrift {
namespace {

using namespace config_test;  // NOLINT(google-build-using-namespace)

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

}  // namespace
}  // namespace codedrift
