// The daemon side of the ingest benchmarks: a config text for the streams under test, and a
// running codedriftd (the integration harness's DaemonProcess) with the readings a benchmark
// needs — stream and model counters from /metrics, CPU time and resident memory from /proc.
#pragma once

#include <chrono>
#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "codedrift/result.h"
#include "codedrift/symbolizer.h"

#include "harness.h"

namespace codedrift::bench {

// The models compared: single bytes, tokens as the default config spells them (DESIGN.md's
// example: digits masked, max_distinct 65536), and the same tokens unmasked for comparison.
enum class ModelKind { kBytes, kTokens, kTokensUnmasked };
const char* ModelKindName(ModelKind kind);
TokenOptions BenchTokenOptions(ModelKind kind = ModelKind::kTokens);

struct BenchModel {
  std::string name;
  ModelKind kind = ModelKind::kBytes;
  uint64_t window_symbols = 1 << 20;
  std::string table;  // a file in the daemon's directory (BenchFile); empty: no table
};

// A file written into the daemon's directory before it starts (a deployed table).
struct BenchFile {
  std::string name;
  std::string content;
};

// The table a link would deploy for single bytes: a prefix code trained on `sample` (the
// start of the capture), with an escape for bytes the sample lacks.
Result<std::string> TrainedBytesTable(std::string_view sample);

struct BenchStream {
  std::string name;
  bool udp = false;  // udp:// with datagram framing; otherwise tcp:// with lines
  std::vector<BenchModel> models;
};

// A daemon config: loopback ephemeral ports, evaluation every `evaluate_every`.
std::string DaemonConfigText(const std::vector<BenchStream>& streams,
                             const std::string& evaluate_every);

// One codedriftd process in a temporary directory. Not thread-safe; one benchmark thread.
class BenchDaemon {
 public:
  explicit BenchDaemon(const std::string& config_yaml, const std::vector<BenchFile>& files = {});
  ~BenchDaemon();

  Status WaitReady();
  uint16_t port(const std::string& stream) const { return process_->stream_port(stream); }
  pid_t pid() const { return process_->pid(); }

  // A per-stream counter (`codedrift_bytes_total`, ...) or 0 when absent.
  uint64_t StreamCounter(const std::string& metric, const std::string& stream) const;
  // codedrift_symbols_total of one model, updated at each evaluation; 0 when absent.
  uint64_t ModelSymbols(const std::string& stream, const std::string& model) const;
  // Evaluation passes so far (codedrift_evaluation_seconds_count).
  uint64_t Evaluations() const;
  // Polls until `done` holds (true) or `timeout` passes (false).
  static bool Await(const std::function<bool()>& done, std::chrono::milliseconds timeout);

  // User + system seconds of every thread of the daemon so far.
  double CpuSeconds() const;
  // Resident set now and its peak (VmRSS, VmHWM), bytes.
  uint64_t RssBytes() const { return StatusField("VmRSS:"); }
  uint64_t PeakRssBytes() const { return StatusField("VmHWM:"); }

  // SIGTERM and wait; returns the exit code (-1: it did not stop).
  int Stop();
  std::string Log() const { return process_->Log(); }

  // The temporary directory the daemon runs in (its config, state_dir) and the process itself,
  // for tools that rewrite the config, signal or call the HTTP API (the soak benchmark).
  const testing::TempDir& dir() const { return dir_; }
  testing::DaemonProcess& process() { return *process_; }

 private:
  uint64_t StatusField(const std::string& field) const;

  testing::TempDir dir_;
  std::unique_ptr<testing::DaemonProcess> process_;
};

}  // namespace codedrift::bench
