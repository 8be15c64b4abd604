#include "ingest_load_daemon.h"

#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <sstream>

#include "codedrift/byte_histogram.h"
#include "codedrift/code_table.h"
#include "codedrift/symbol_counts.h"

#include <unistd.h>

namespace codedrift::bench {

const char* ModelKindName(ModelKind kind) {
  switch (kind) {
    case ModelKind::kBytes:
      return "bytes";
    case ModelKind::kTokens:
      return "tokens";
    case ModelKind::kTokensUnmasked:
      return "tokens-unmasked";
  }
  return "bytes";
}

TokenOptions BenchTokenOptions(ModelKind kind) {
  // As the embedded default config spells its tokens model (digits masked, so values and
  // sequence numbers do not flood the table); unmasked, the capture's timestamps and sequence
  // numbers fill the table and then take the overflow symbol.
  TokenOptions options;
  options.delimiters = " =,";
  options.mask_digits = kind != ModelKind::kTokensUnmasked;
  options.max_distinct = 65536;
  return options;
}

std::string DaemonConfigText(const std::vector<BenchStream>& streams,
                             const std::string& evaluate_every) {
  std::ostringstream out;
  out << "http: {listen: 127.0.0.1:0}\n"
      << "state_dir: state\n"
      << "evaluate_every: " << evaluate_every << "\n"
      << "streams:\n";
  for (const BenchStream& stream : streams) {
    out << "  - name: " << stream.name << "\n";
    if (stream.udp) {
      out << "    listen: udp://127.0.0.1:0\n"
          << "    framing: datagram\n"
          << "    receive_buffer_bytes: 8388608\n";
    } else {
      out << "    listen: tcp://127.0.0.1:0\n"
          << "    framing: lines\n";
    }
    out << "    models:\n";
    for (const BenchModel& model : stream.models) {
      out << "      - name: " << model.name << "\n";
      if (model.kind == ModelKind::kBytes) {
        out << "        symbols: {kind: bytes}\n";
      } else {
        const TokenOptions tokens = BenchTokenOptions(model.kind);
        out << "        symbols: {kind: tokens, delimiters: \"" << tokens.delimiters
            << "\", mask_digits: " << (tokens.mask_digits ? "true" : "false")
            << ", max_distinct: " << tokens.max_distinct << "}\n";
      }
      out << "        window: {symbols: " << model.window_symbols << "}\n";
      if (!model.table.empty()) out << "        table: " << model.table << "\n";
    }
  }
  return out.str();
}

Result<std::string> TrainedBytesTable(std::string_view sample) {
  uint64_t histogram[256] = {};
  CountBytes(sample, histogram);
  auto table = TrainPrefixTable(BytesFromHistogram(histogram), /*max_length=*/15,
                                /*literal_bits=*/8);
  if (!table.ok()) return table.error();
  return FormatCodeTable(table.value());
}

BenchDaemon::BenchDaemon(const std::string& config_yaml, const std::vector<BenchFile>& files) {
  for (const BenchFile& file : files) dir_.Write(file.name, file.content);
  process_ = std::make_unique<testing::DaemonProcess>(dir_, config_yaml);
}

BenchDaemon::~BenchDaemon() = default;  // the process is killed if still running

Status BenchDaemon::WaitReady() {
  if (!process_->WaitReady(std::chrono::seconds(60))) {
    return Error{"codedriftd did not become ready:\n" + process_->Log()};
  }
  return Ok{};
}

uint64_t BenchDaemon::StreamCounter(const std::string& metric, const std::string& stream) const {
  const auto value = process_->Metric(metric, {"stream=\"" + stream + "\""});
  return value ? static_cast<uint64_t>(*value) : 0;
}

uint64_t BenchDaemon::ModelSymbols(const std::string& stream, const std::string& model) const {
  const auto value = process_->Metric("codedrift_symbols_total",
                                      {"stream=\"" + stream + "\"", "model=\"" + model + "\""});
  return value ? static_cast<uint64_t>(*value) : 0;
}

uint64_t BenchDaemon::Evaluations() const {
  const auto value = process_->Metric("codedrift_evaluation_seconds_count");
  return value ? static_cast<uint64_t>(*value) : 0;
}

bool BenchDaemon::Await(const std::function<bool()>& done, std::chrono::milliseconds timeout) {
  return testing::WaitFor(done, timeout);
}

double BenchDaemon::CpuSeconds() const {
  std::ifstream in("/proc/" + std::to_string(pid()) + "/stat");
  std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  // Fields after the command name (which may hold spaces) start at the last ')'; utime and
  // stime are fields 14 and 15 of the whole line, i.e. the 12th and 13th after it.
  const size_t close = text.rfind(')');
  if (close == std::string::npos) return 0;
  std::istringstream fields(text.substr(close + 2));
  std::string field;
  unsigned long long utime = 0, stime = 0;
  for (int i = 3; i <= 15 && fields >> field; ++i) {
    if (i == 14) utime = std::strtoull(field.c_str(), nullptr, 10);
    if (i == 15) stime = std::strtoull(field.c_str(), nullptr, 10);
  }
  return static_cast<double>(utime + stime) / static_cast<double>(::sysconf(_SC_CLK_TCK));
}

uint64_t BenchDaemon::StatusField(const std::string& field) const {
  std::ifstream in("/proc/" + std::to_string(pid()) + "/status");
  std::string line;
  while (std::getline(in, line)) {
    if (line.rfind(field, 0) == 0) {
      return std::strtoull(line.c_str() + field.size(), nullptr, 10) * 1024;  // "... kB"
    }
  }
  return 0;
}

int BenchDaemon::Stop() { return process_->Stop(); }

}  // namespace codedrift::bench
