// TCP ingest and resident memory per model (ingest_load_suite.h).
#include <algorithm>
#include <cstdio>
#include <map>
#include <string>
#include <vector>

#include "codedrift/symbolizer.h"

#include "ingest_load_daemon.h"
#include "ingest_load_suite.h"
#include <sys/resource.h>

namespace codedrift::bench {
namespace {

constexpr auto kSettleTimeout = std::chrono::seconds(120);
constexpr int kConnectionCounts[] = {1, 16};
constexpr ModelKind kKinds[] = {ModelKind::kBytes, ModelKind::kTokens, ModelKind::kTokensUnmasked};
constexpr ModelKind kRssKinds[] = {ModelKind::kBytes, ModelKind::kTokens};
constexpr size_t kTableSampleBytes = size_t{16} << 20;
constexpr int kDaemonIoThreads = 2;  // codedriftd's default --io-threads

// User + system seconds of this process (all threads): during a daemon run, the senders.
double ProcessCpuSeconds() {
  rusage usage{};
  ::getrusage(RUSAGE_SELF, &usage);
  return static_cast<double>(usage.ru_utime.tv_sec + usage.ru_stime.tv_sec) +
         static_cast<double>(usage.ru_utime.tv_usec + usage.ru_stime.tv_usec) / 1e6;
}

double Median(std::vector<double> values) {
  if (values.empty()) return 0;
  std::sort(values.begin(), values.end());
  const size_t mid = values.size() / 2;
  return values.size() % 2 == 1 ? values[mid] : (values[mid - 1] + values[mid]) / 2;
}

// Symbols the tokens model makes of the slices (the count the daemon must reach).
uint64_t TokenSymbols(const Capture& capture, const std::vector<Slice>& slices) {
  auto symbolizer = MakeTokenSymbolizer(BenchTokenOptions());
  std::vector<SymbolId> ids;
  uint64_t total = 0;
  for (const Slice& slice : slices) {
    capture.ForEachRecord(slice, [&](std::string_view record) {
      ids.clear();
      total += symbolizer->Append(record, ids);
    });
  }
  return total;
}

// Per-run figures of one row; ratios are paired with the baseline run just before.
// sender_mb_per_cpu_s: what the sending threads spent (this process) during the run.
struct Row {
  std::vector<double> mb_per_s, records_per_s, mb_per_cpu_s, ratio, cpu_ratio, sender_mb_per_cpu_s;
};

// What the daemon should have counted on one stream so far.
struct Expected {
  uint64_t bytes = 0, records = 0, symbols = 0;
};

void PrintRow(const char* label, const Row& row, const char* goal) {
  std::printf("  %-26s %8.0f MB/s %6.2fM rec/s %6.2fx | %7.0f MB/cpu-s %6.2fx  %s\n", label,
              Median(row.mb_per_s), Median(row.records_per_s) / 1e6, Median(row.ratio),
              Median(row.mb_per_cpu_s), Median(row.cpu_ratio), goal);
}

// When a row misses its goal, one line of CPU arithmetic. From the CPU each side spent per MB
// (the daemon's threads; the sending threads of this process), what the daemon could carry
// (a) with the CPU the receiver's runs actually got (receiver + senders, in cores: on a shared
// machine often well below all of them) and (b) on all cores, idle. One connection is read by
// one io thread at a time, so it is also bounded by one thread's rate. If (b) is below the
// goal, the goal is out of reach on this machine as the code stands.
void PrintCeiling(const Row& row, const Row& baseline, int connections, double goal) {
  if (Median(row.ratio) >= goal) return;
  const double daemon = Median(row.mb_per_cpu_s);
  const double sender = Median(row.sender_mb_per_cpu_s);
  const double receiver = Median(baseline.mb_per_s);
  const double got =
      receiver * (1 / Median(baseline.mb_per_cpu_s) + 1 / Median(baseline.sender_mb_per_cpu_s));
  const double cores = static_cast<double>(std::max(1L, ::sysconf(_SC_NPROCESSORS_ONLN)));
  const double by_threads = std::min(connections, kDaemonIoThreads) * daemon;
  const double here = std::min(by_threads, got / (1 / daemon + 1 / sender));
  const double idle = std::min(by_threads, cores / (1 / daemon + 1 / sender));
  std::printf(
      "    CPU arithmetic: codedriftd %.0f MB/cpu-s, senders %.0f; the receiver's runs got %.2f "
      "of %.0f cores: at most %.0f MB/s (%.2fx) here, %.0f MB/s (%.2fx) on idle cores%s\n",
      daemon, sender, got, cores, here, here / receiver, idle, idle / receiver,
      idle / receiver < goal ? ": out of reach on this machine" : "");
}

std::string Verdict(double ratio, double goal, double aim) {
  char text[96];
  if (aim > 0) {
    std::snprintf(text, sizeof text, "goal >= %.1fx, aim %.1fx: %s", goal, aim,
                  ratio >= aim    ? "aim met"
                  : ratio >= goal ? "goal met"
                                  : "MISSED");
  } else {
    std::snprintf(text, sizeof text, "goal >= %.1fx: %s", goal, ratio >= goal ? "met" : "MISSED");
  }
  return text;
}

}  // namespace

bool RunTcpSuite(const Capture& capture, const SuiteOptions& options) {
  std::map<int, std::vector<Slice>> slices;
  std::map<int, uint64_t> token_symbols;
  for (int connections : kConnectionCounts) {
    slices[connections] = capture.Slices(connections, options.tcp_bytes);
    token_symbols[connections] = TokenSymbols(capture, slices[connections]);
  }

  PlainTcpReceiver baseline;
  if (auto started = baseline.Start(); !started.ok()) {
    std::fprintf(stderr, "%s\n", started.error().message.c_str());
    return false;
  }
  // One daemon, one stream per model kind (each stream has its one model), so runs of the
  // baseline and both models interleave and share the machine's load evenly.
  // The bytes model deploys a table trained on the capture's first 16 MiB, as a link would:
  // the model then keeps lifetime counts only of the bytes that table lacks.
  auto table = TrainedBytesTable(capture.text().substr(0, kTableSampleBytes));
  if (!table.ok()) {
    std::fprintf(stderr, "training the bytes table: %s\n", table.error().message.c_str());
    return false;
  }
  std::vector<BenchStream> streams;
  for (ModelKind kind : kKinds) {
    BenchModel model{.name = "m", .kind = kind};
    if (kind == ModelKind::kBytes) model.table = "bytes.table";
    streams.push_back({.name = ModelKindName(kind), .models = {model}});
  }
  BenchDaemon daemon(DaemonConfigText(streams, options.evaluate_every),
                     {{"bytes.table", table.value()}});
  if (auto ready = daemon.WaitReady(); !ready.ok()) {
    std::fprintf(stderr, "%s\n", ready.error().message.c_str());
    return false;
  }

  std::map<std::pair<int, int>, Row> rows;  // (connections, 0 baseline | 1 bytes | 2 tokens)
  std::map<ModelKind, Expected> expected;
  for (int run = 0; run < options.runs; ++run) {
    for (int connections : kConnectionCounts) {
      const std::vector<Slice>& parts = slices[connections];
      const double base_cpu0 = baseline.cpu_seconds();
      const double base_process_cpu0 = ProcessCpuSeconds();
      const TcpRun base = SendTcp(baseline.port(), capture, parts);
      if (!base.error.empty()) {
        std::fprintf(stderr, "baseline run: %s\n", base.error.c_str());
        return false;
      }
      const double base_cpu = std::max(baseline.cpu_seconds() - base_cpu0, 1e-3);
      // This process ran both the receiver's threads and the senders.
      const double base_sender_cpu =
          std::max(ProcessCpuSeconds() - base_process_cpu0 - base_cpu, 1e-3);
      Row& base_row = rows[{connections, 0}];
      base_row.mb_per_s.push_back(static_cast<double>(base.bytes) / base.seconds / 1e6);
      base_row.records_per_s.push_back(static_cast<double>(base.records) / base.seconds);
      base_row.mb_per_cpu_s.push_back(static_cast<double>(base.bytes) / base_cpu / 1e6);
      base_row.sender_mb_per_cpu_s.push_back(static_cast<double>(base.bytes) / base_sender_cpu /
                                             1e6);
      base_row.ratio.push_back(1);
      base_row.cpu_ratio.push_back(1);

      for (ModelKind kind : kKinds) {
        const std::string stream = ModelKindName(kind);
        const double cpu0 = daemon.CpuSeconds();
        const double sender_cpu0 = ProcessCpuSeconds();
        const TcpRun sent = SendTcp(daemon.port(stream), capture, parts);
        const double sender_cpu = std::max(ProcessCpuSeconds() - sender_cpu0, 1e-3);
        const double cpu = std::max(daemon.CpuSeconds() - cpu0, 1e-2);
        if (!sent.error.empty()) {
          std::fprintf(stderr, "codedriftd %s run: %s\n", stream.c_str(), sent.error.c_str());
          return false;
        }
        Expected& want = expected[kind];
        want.bytes += sent.bytes;
        want.records += sent.records;
        want.symbols += kind == ModelKind::kBytes ? sent.bytes : token_symbols[connections];
        // The run counts only once the model has counted every symbol (the evaluation after
        // the last record publishes codedrift_symbols_total).
        const bool counted = BenchDaemon::Await(
            [&] {
              return daemon.StreamCounter("codedrift_bytes_total", stream) == want.bytes &&
                     daemon.StreamCounter("codedrift_records_total", stream) == want.records &&
                     daemon.ModelSymbols(stream, "m") == want.symbols;
            },
            kSettleTimeout);
        if (!counted) {
          std::fprintf(stderr,
                       "codedriftd %s: counted bytes %llu records %llu symbols %llu, sent %llu "
                       "%llu %llu\n",
                       stream.c_str(),
                       static_cast<unsigned long long>(
                           daemon.StreamCounter("codedrift_bytes_total", stream)),
                       static_cast<unsigned long long>(
                           daemon.StreamCounter("codedrift_records_total", stream)),
                       static_cast<unsigned long long>(daemon.ModelSymbols(stream, "m")),
                       static_cast<unsigned long long>(want.bytes),
                       static_cast<unsigned long long>(want.records),
                       static_cast<unsigned long long>(want.symbols));
          return false;
        }
        Row& row = rows[{connections, static_cast<int>(kind) + 1}];
        row.mb_per_s.push_back(static_cast<double>(sent.bytes) / sent.seconds / 1e6);
        row.sender_mb_per_cpu_s.push_back(static_cast<double>(sent.bytes) / sender_cpu / 1e6);
        row.records_per_s.push_back(static_cast<double>(sent.records) / sent.seconds);
        row.mb_per_cpu_s.push_back(static_cast<double>(sent.bytes) / cpu / 1e6);
        row.ratio.push_back(base.seconds / sent.seconds);
        row.cpu_ratio.push_back(base_cpu / cpu);
      }
    }
  }
  const int stopped = daemon.Stop();
  baseline.Stop();

  std::printf(
      "\ndaemon TCP ingest, lines framing, one model with a 1M-symbol count window per "
      "stream;\n%.0f MiB per run, median of %d interleaved runs; ratios are to the plain "
      "receiver's run just before;\nthen throughput per CPU-second of the receiving "
      "process (daemon: all its threads)\n",
      static_cast<double>(options.tcp_bytes) / (1 << 20), options.runs);
  for (int connections : kConnectionCounts) {
    std::printf(" %d connection%s\n", connections, connections == 1 ? "" : "s");
    const Row& baseline_row = rows[{connections, 0}];
    PrintRow("plain receiver (baseline)", baseline_row, "");
    const Row& bytes = rows[{connections, static_cast<int>(ModelKind::kBytes) + 1}];
    PrintRow("codedriftd, bytes model", bytes, Verdict(Median(bytes.ratio), 0.5, 0.7).c_str());
    PrintCeiling(bytes, baseline_row, connections, 0.5);
    const Row& tokens = rows[{connections, static_cast<int>(ModelKind::kTokens) + 1}];
    PrintRow("codedriftd, tokens model", tokens, Verdict(Median(tokens.ratio), 0.3, 0).c_str());
    PrintCeiling(tokens, baseline_row, connections, 0.3);
    const Row& unmasked = rows[{connections, static_cast<int>(ModelKind::kTokensUnmasked) + 1}];
    PrintRow("  same, digits not masked", unmasked, "(for comparison)");
  }
  std::printf(
      "  bytes model: deploys a prefix table (with escape) trained on the capture's first "
      "16 MiB\n");
  std::printf(
      "  tokens model: DESIGN.md's example symbolizer (delimiters \" =,\", mask_digits: true, "
      "max_distinct: 65536); unmasked, the capture's timestamps fill the table\n");
  std::printf(
      "  every run: codedrift_bytes_total, codedrift_records_total and "
      "codedrift_symbols_total equal what was sent\n");
  if (stopped != 0) std::fprintf(stderr, "codedriftd exited with %d\n", stopped);
  return stopped == 0;
}

bool RunRssSuite(const Capture& capture, const SuiteOptions& /*options*/) {
  constexpr int kMany = 9;
  const uint64_t fill_bytes = 16ull << 20;  // > 1M symbols for both kinds, the rings wrap
  const std::vector<Slice> parts = capture.Slices(1, fill_bytes);
  std::printf(
      "\nresident memory per model, 1M-symbol count window (VmRSS after the windows are "
      "full and two more evaluations; peak VmHWM beside)\n");
  for (ModelKind kind : kRssKinds) {
    uint64_t rss[2] = {}, peak[2] = {};
    for (int i = 0; i < 2; ++i) {
      const int models = i == 0 ? 1 : kMany;
      BenchStream stream{.name = "rss"};
      for (int m = 0; m < models; ++m) {
        stream.models.push_back({std::string("m").append(std::to_string(m)), kind});
      }
      BenchDaemon daemon(DaemonConfigText({stream}, "200ms"));
      if (auto ready = daemon.WaitReady(); !ready.ok()) {
        std::fprintf(stderr, "%s\n", ready.error().message.c_str());
        return false;
      }
      const TcpRun sent = SendTcp(daemon.port("rss"), capture, parts);
      const uint64_t want = kind == ModelKind::kBytes ? sent.bytes : TokenSymbols(capture, parts);
      const std::string last = std::string("m").append(std::to_string(models - 1));
      bool settled = sent.error.empty() &&
                     BenchDaemon::Await([&] { return daemon.ModelSymbols("rss", last) == want; },
                                        kSettleTimeout);
      // Two more evaluations, so every evaluation-time buffer has been allocated and freed.
      const uint64_t evaluations = daemon.Evaluations();
      settled =
          settled && BenchDaemon::Await([&] { return daemon.Evaluations() >= evaluations + 2; },
                                        kSettleTimeout);
      if (!settled) {
        std::fprintf(stderr, "rss run (%d %s models): the windows did not fill\n", models,
                     ModelKindName(kind));
        return false;
      }
      rss[i] = daemon.RssBytes();
      peak[i] = daemon.PeakRssBytes();
      daemon.Stop();
    }
    const auto per_extra_model = [](const uint64_t(&bytes)[2]) {
      return (static_cast<double>(bytes[1]) - static_cast<double>(bytes[0])) / (kMany - 1) / 1e6;
    };
    const double per_model = per_extra_model(rss);
    const double peak_per_model = per_extra_model(peak);
    std::printf("  %-6s 1 model %6.1f MB, %d models %6.1f MB: %5.2f MB per model (peak %5.2f)%s\n",
                ModelKindName(kind), static_cast<double>(rss[0]) / 1e6, kMany,
                static_cast<double>(rss[1]) / 1e6, per_model, peak_per_model,
                kind == ModelKind::kBytes
                    ? (per_model < 3.0 ? "  goal < 3 MB: met" : "  goal < 3 MB: MISSED")
                    : "");
  }
  return true;
}

}  // namespace codedrift::bench
