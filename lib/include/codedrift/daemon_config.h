// The daemon configuration (DESIGN.md section 5) as plain structs, parsed and validated from
// YAML. Every error reads "file:line:column: what was wrong, what was expected" (1-based);
// a config with several errors reports them all, one per line. Unknown keys are errors with a
// did-you-mean. Additions beyond DESIGN.md: stream `idle_timeout` (tcp/unix, default 5m, 0s =
// never), stream `receive_buffer_bytes` (udp, default 8 MiB), model `orders` (block orders for
// block entropy, 1..4, default [1]), window `buckets` for either window kind (default 60).
//
// Scheme rules: `datagram` framing only with udp://, `lines`/`u16be`/`u32be` only with tcp://
// or unix:// (default: lines for tcp/unix, datagram for udp); `max_connections` and
// `idle_timeout` only for tcp/unix; `receive_buffer_bytes` only for udp; `allow` not for unix
// (use file permissions); `overlong` not for u16be/u32be (an oversized frame closes the
// connection). Ports may be 0 (the system picks one). Relative paths (`table`, `state_dir`,
// `http.admin_token_file`) resolve against the config file's directory. A model without `table`
// measures entropy only: no deployed code, so no redundancy, saving or alert figures.
// With datagram framing, `overlong` is for the daemon to apply to a datagram longer than
// max_record_bytes (no framer is involved). `export_counts: true` is refused for alphabets of
// more than 4096 symbols (each symbol is one Prometheus series). Webhooks are plain http://.
#pragma once

#include <chrono>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "codedrift/alphabet.h"
#include "codedrift/config_values.h"
#include "codedrift/framer.h"
#include "codedrift/result.h"
#include "codedrift/symbolizer.h"

namespace codedrift {

inline constexpr uint32_t kMaxRecordBytesLimit = 16u << 20;  // 16 MiB
inline constexpr int kMaxBlockOrder = 4;
inline constexpr size_t kMaxStreams = 256;
inline constexpr size_t kMaxModelsPerStream = 64;
inline constexpr size_t kMaxAllowRules = 256;

struct HttpConfig {
  std::string host = "127.0.0.1";  // IPv6 without brackets
  uint16_t port = 7070;
  std::string admin_token_file;  // empty: token-protected endpoints (reload) are refused
};

enum class Framing { kLines, kU16be, kU32be, kDatagram };

std::string_view FramingName(Framing framing);  // "lines", "u16be", "u32be", "datagram"

// What a model's symbolizer is: `kind` picks which of the option fields apply.
struct SymbolsConfig {
  AlphabetKind kind = AlphabetKind::kBytes;
  int block = 1;        // bytes: 1..4
  TokenOptions tokens;  // tokens
  FieldOptions field;   // field
  BytesOptions bytes;   // bytes: max_distinct of blocks of 3..4

  Alphabet alphabet() const;  // bytes:<block>, tokens or field:<width_bits>
};

enum class WindowKind { kSymbols, kSpan };

struct WindowConfig {
  WindowKind kind = WindowKind::kSymbols;
  uint64_t symbols = 1048576;  // kSymbols: the last N symbols (2..2^28)
  ConfigDuration span{0};      // kSpan: the symbols of the last `span` (>= 1s)
  // Sub-windows for batch-means confidence (2..4096; for kSymbols at most `symbols`, and
  // when not given min(60, symbols)).
  uint32_t buckets = 60;
};

struct AlertRule {
  double saving = 0.05;                                    // threshold, ratio in (0, 1)
  ConfigDuration for_duration = std::chrono::minutes(10);  // key `for`: sustained this long
  // No verdict on smaller windows. For a count window an explicit value above `symbols` is
  // an error (the alert could never fire); the default is clamped to `symbols`.
  uint64_t min_symbols = 100000;
  double confidence = 0.95;  // of the lower saving bound, in (0, 1)
  ConfigDuration cooldown = std::chrono::hours(1);
  ConfigDuration max_payback = std::chrono::hours(24);  // alert only if payback is shorter
};

struct ModelConfig {
  std::string name;
  SymbolsConfig symbols;
  WindowConfig window;
  std::string table;  // code table path, resolved; empty: no deployed code (entropy only)
  AlertRule alert;
  bool export_counts = false;
  std::vector<int> orders = {1};  // ascending, unique, each 1..kMaxBlockOrder
};

struct StreamConfig {
  std::string name;
  ListenAddress listen;
  Framing framing = Framing::kLines;
  uint32_t max_record_bytes = 65536;  // 1..kMaxRecordBytesLimit
  OverlongPolicy overlong = OverlongPolicy::kTruncate;
  uint32_t max_connections = 256;                         // tcp/unix: 1..65536
  ConfigDuration idle_timeout = std::chrono::minutes(5);  // tcp/unix; 0: never
  std::vector<Cidr> allow;  // tcp/udp peers; default 127.0.0.0/8 and ::1/128; empty for unix
  uint32_t receive_buffer_bytes = 8u << 20;  // udp SO_RCVBUF: 4096..1 GiB
  std::vector<ModelConfig> models;           // at least one

  // True when `allow` admits the peer address (4 or 16 bytes, network order).
  bool Allows(std::span<const uint8_t> peer_address) const;
};

struct WebhookConfig {
  std::string url;  // as written
  HttpUrl target;   // parsed url
  ConfigDuration timeout = std::chrono::seconds(2);
  uint32_t retries = 5;  // 0..100
};

struct AlertsConfig {
  bool log = true;
  std::optional<WebhookConfig> webhook;
};

// A whole daemon config. Plain value type.
struct DaemonConfig {
  std::string file_name;  // where it was read from (for messages)
  HttpConfig http;
  std::string state_dir = "/var/lib/codedrift";
  ConfigDuration evaluate_every = std::chrono::seconds(5);     // >= 100ms
  ConfigDuration checkpoint_every = std::chrono::seconds(30);  // >= 1s
  std::vector<StreamConfig> streams;                           // at least one
  AlertsConfig alerts;
};

// Parses `text`. `file_name` appears in messages; relative paths resolve against its
// directory (against the working directory when it has none).
Result<DaemonConfig> ParseDaemonConfig(std::string_view text, std::string_view file_name);
// Reads and parses the file at `path`; relative paths resolve against its absolute directory.
Result<DaemonConfig> LoadDaemonConfig(const std::string& path);

// The YAML text of the default config: HTTP on 127.0.0.1:7070, a tcp lines stream `uplink`
// on 127.0.0.1:7071 (models `bytes` and `tokens`), a udp datagram stream `packets` on
// 127.0.0.1:7072 (model `field`); no tables, loopback peers only.
std::string_view EmbeddedDefaultConfig();

}  // namespace codedrift
