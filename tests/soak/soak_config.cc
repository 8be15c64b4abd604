#include "soak_config.h"

#include <sstream>

namespace codedrift::soak {
namespace {

constexpr char kBytes[] = "{kind: bytes, block: 1}";
constexpr char kBlocks[] = "{kind: bytes, block: 2}";
constexpr char kTokens[] =
    "{kind: tokens, delimiters: \" =\", mask_digits: true, max_distinct: 4096}";
// The first 12 bits of each datagram, against a fixed 12-bit code (never swapped: one alert).
constexpr char kField[] = "{kind: field, offset_bits: 0, width_bits: 12, order: big}";

}  // namespace

std::vector<SoakStream> SoakStreams() {
  // Count windows of 2^20 symbols and time windows of 30-60 s: both kinds fill within the
  // first minute, so resident memory is flat after the warm-up.
  return {
      {.name = "lines",
       .kind = StreamKind::kTcp,
       .framing = WireFraming::kLines,
       .connections = 2,
       .models = {{.name = "bytes",
                   .symbols = kBytes,
                   .window = "{symbols: 1048576}",
                   .table = "bytes",
                   .counts_payload = true,
                   .min_symbols = 524288},
                  {.name = "bytes2",
                   .symbols = kBlocks,
                   .window = "{span: 30s, buckets: 30}",
                   .table = "bytes2"},
                  {.name = "tokens",
                   .symbols = kTokens,
                   .window = "{symbols: 262144}",
                   .table = "tokens",
                   .min_symbols = 131072}}},
      {.name = "frames",
       .kind = StreamKind::kTcp,
       .framing = WireFraming::kU16be,
       .models = {{.name = "bytes",
                   .symbols = kBytes,
                   .window = "{span: 30s, buckets: 30}",
                   .table = "bytes",
                   .counts_payload = true},
                  {.name = "tokens",
                   .symbols = kTokens,
                   .window = "{span: 60s, buckets: 60}",
                   .table = "tokens"}}},
      {.name = "local",
       .kind = StreamKind::kUnix,
       .framing = WireFraming::kLines,
       .models = {{.name = "bytes",
                   .symbols = kBytes,
                   .window = "{symbols: 1048576}",
                   .table = "bytes",
                   .counts_payload = true,
                   .min_symbols = 524288},
                  {.name = "bytes2",
                   .symbols = kBlocks,
                   .window = "{symbols: 1048576}",
                   .table = "bytes2",
                   .min_symbols = 524288}}},
      {.name = "packets",
       .kind = StreamKind::kUdp,
       .models = {{.name = "bytes",
                   .symbols = kBytes,
                   .window = "{symbols: 1048576}",
                   .table = "bytes",
                   .counts_payload = true,
                   .min_symbols = 524288},
                  {.name = "field",
                   .symbols = kField,
                   .window = "{symbols: 65536}",
                   .table = "field12",
                   .swapped = false,
                   .min_symbols = 32768}}},
  };
}

std::string TablePath(const SoakConfigOptions& options, const SoakModel& model, char variant) {
  return options.tables_dir + "/" + model.table +
         (model.swapped ? std::string("-") + variant : std::string()) + ".table";
}

std::string SoakConfigText(const SoakConfigOptions& options, char variant) {
  std::ostringstream out;
  out << "# codedrift soak benchmark, table set " << variant << "\n"
      << "http: {listen: 127.0.0.1:0, admin_token_file: " << options.token_file << "}\n"
      << "state_dir: state\n"
      << "evaluate_every: " << options.evaluate_every << "\n"
      << "checkpoint_every: 10s\n"
      << "streams:\n";
  for (const SoakStream& stream : SoakStreams()) {
    out << "  - name: " << stream.name << "\n";
    switch (stream.kind) {
      case StreamKind::kTcp:
        out << "    listen: tcp://127.0.0.1:0\n";
        break;
      case StreamKind::kUnix:
        out << "    listen: unix://" << options.unix_path << "\n";
        break;
      case StreamKind::kUdp:
        out << "    listen: udp://127.0.0.1:0\n"
            << "    framing: datagram\n"
            << "    receive_buffer_bytes: 8388608\n";
        break;
    }
    if (stream.kind != StreamKind::kUdp) {
      out << "    framing: "
          << (stream.framing == WireFraming::kLines   ? "lines"
              : stream.framing == WireFraming::kU16be ? "u16be"
                                                      : "u32be")
          << "\n";
    }
    out << "    max_record_bytes: 4096\n"
        << "    models:\n";
    for (const SoakModel& model : stream.models) {
      out << "      - name: " << model.name << "\n"
          << "        symbols: " << model.symbols << "\n"
          << "        window: " << model.window << "\n"
          << "        table: " << TablePath(options, model, variant) << "\n"
          << "        alert: {saving: 3%, for: 4s, min_symbols: " << model.min_symbols
          << ", confidence: 0.95, cooldown: 30s, max_payback: 1d}\n";
    }
  }
  out << "alerts:\n"
      << "  log: true\n"
      << "  webhook: {url: \"http://127.0.0.1:" << options.webhook_port
      << "/hook\", timeout: 5s, retries: 5}\n";
  return out.str();
}

}  // namespace codedrift::soak
