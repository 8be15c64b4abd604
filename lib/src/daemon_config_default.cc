// The default daemon config, embedded so codedriftd runs without a config file.
#include "codedrift/daemon_config.h"

namespace codedrift {

std::string_view EmbeddedDefaultConfig() {
  // Kept in step with DESIGN.md section 5; every key is spelled out so this text doubles as a
  // reference. No tables: models measure entropy until a table is configured.
  static constexpr std::string_view kText = R"yaml(# codedrift default configuration
http: {listen: 127.0.0.1:7070}
state_dir: /var/lib/codedrift
evaluate_every: 5s
checkpoint_every: 30s
streams:
  - name: uplink
    listen: tcp://127.0.0.1:7071
    framing: lines
    max_record_bytes: 65536
    overlong: truncate
    max_connections: 256
    idle_timeout: 5m
    allow: [127.0.0.0/8, "::1/128"]
    models:
      - name: bytes
        symbols: {kind: bytes, block: 1}
        window: {symbols: 1048576}
        alert: {saving: 5%, for: 10m, min_symbols: 100000, confidence: 0.95, cooldown: 1h, max_payback: 1d}
        export_counts: false
        orders: [1]
      - name: tokens
        symbols: {kind: tokens, delimiters: " =,", mask_digits: true, max_distinct: 65536}
        window: {span: 10m, buckets: 60}
  - name: packets
    listen: udp://127.0.0.1:7072
    framing: datagram
    max_record_bytes: 65536
    overlong: truncate
    receive_buffer_bytes: 8388608
    allow: [127.0.0.0/8, "::1/128"]
    models:
      - name: field
        symbols: {kind: field, offset_bits: 0, width_bits: 8, order: big, transform: none}
        window: {symbols: 65536}
alerts:
  log: true
)yaml";
  return kText;
}

}  // namespace codedrift
