// Per-evaluation and per-record costs of a model, against a same-run memcpy baseline:
// Evaluate at K = 256 (bytes) and K = 65,536 (tokens) over a full 1M-symbol window, the Sample
// copy taken under the model's lock, and Ingest per record or per received buffer's run.
#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <memory>
#include <random>
#include <string>
#include <thread>
#include <utility>
#include <vector>

#include <benchmark/benchmark.h>

#include "codedrift/clock.h"
#include "codedrift/code_table.h"
#include "codedrift/evaluator.h"
#include "codedrift/model.h"

namespace codedrift {
namespace {

constexpr uint64_t kWindow = 1 << 20;
constexpr uint32_t kDistinctTokens = 65535;  // plus the end-of-record symbol: K = 65,536

// Invented telemetry from river gauges: one key=value line per reading, seeded.
std::vector<std::string> GaugeLines(size_t target_bytes) {
  std::mt19937_64 rng(20240611);
  std::uniform_int_distribution<int> gauge(1, 60), level(120, 480), flow(0, 9999), pct(0, 99);
  std::vector<std::string> lines;
  size_t bytes = 0;
  long long t = 1718064000;
  char line[192];
  while (bytes < target_bytes) {
    t += 1 + pct(rng) % 4;
    const int n = std::snprintf(line, sizeof line,
                                "ts=%lld gauge=g%02d level_cm=%d flow_ls=%d.%d batt=%d status=%s\n",
                                t, gauge(rng), level(rng), flow(rng) / 10, flow(rng) % 10,
                                330 + pct(rng), pct(rng) < 95 ? "ok" : "silt_alarm");
    lines.emplace_back(line, static_cast<size_t>(n));
    bytes += static_cast<size_t>(n);
  }
  return lines;
}

// Records of 15 tokens over kDistinctTokens texts: every 8th token walks through all of them
// (so each is in the window at least twice), the rest are skewed (Zipf-like) as in real fleets.
std::vector<std::string> TokenRecords(uint64_t symbols) {
  std::mt19937_64 rng(65536);
  std::vector<double> weights(kDistinctTokens);
  for (uint32_t r = 0; r < kDistinctTokens; ++r) weights[r] = 1.0 / (r + 1.0);
  std::discrete_distribution<uint32_t> zipf(weights.begin(), weights.end());
  std::vector<std::string> records;
  uint32_t walk = 0;
  uint64_t made = 0;
  char token[16];
  while (made < symbols) {
    std::string record;
    for (int i = 0; i < 15; ++i) {
      const uint32_t id = i % 8 == 0 ? walk++ % kDistinctTokens : zipf(rng);
      std::snprintf(token, sizeof token, i == 0 ? "t%x" : " t%x", id);
      record += token;
    }
    record += '\n';
    records.push_back(std::move(record));
    made += 16;  // 15 tokens and the end of record
  }
  return records;
}

SymbolizerSpec BytesSpec() { return SymbolizerSpec{.kind = AlphabetKind::kBytes}; }

SymbolizerSpec TokensSpec(bool mask_digits) {
  SymbolizerSpec spec{.kind = AlphabetKind::kTokens};
  spec.tokens.mask_digits = mask_digits;
  return spec;
}

// A model with a full 1M-symbol window and a deployed table trained on that window (the
// daemon's usual state), plus the evaluator that measures it. Built once per K.
struct Fixture {
  SteadyClock clock;
  std::unique_ptr<Model> model;
  std::unique_ptr<ModelEvaluator> evaluator;
  std::optional<CodeTable> table;
  ModelSample sample;

  explicit Fixture(bool tokens) {
    model = std::make_unique<Model>(tokens ? TokensSpec(false) : BytesSpec(),
                                    WindowSpec{.symbols = kWindow}, clock);
    for (const auto& record :
         tokens ? TokenRecords(kWindow + kWindow / 8) : GaugeLines(kWindow + kWindow / 8)) {
      model->Ingest(record);
    }
    evaluator = std::make_unique<ModelEvaluator>(EvaluationOptions{});
    sample = model->Sample();
    evaluator->Evaluate(sample, nullptr);
    auto trained = TrainPrefixTable(*evaluator->last_window_counts(), tokens ? 20 : 15, 8);
    if (trained.ok()) table = std::move(trained).value();
  }

  size_t distinct() const { return evaluator->last_window_counts()->map().size(); }
};

Fixture& FixtureFor(int64_t k) {
  static Fixture bytes(false);
  static Fixture tokens(true);
  return k > 256 ? tokens : bytes;
}

void BM_Evaluator_Evaluate(benchmark::State& state) {
  Fixture& f = FixtureFor(state.range(0));
  if (!f.table) return state.SkipWithError("could not train the deployed table");
  for (auto _ : state) {
    Evaluation e = f.evaluator->Evaluate(f.sample, &*f.table);
    benchmark::DoNotOptimize(e);
  }
  state.counters["ids"] = static_cast<double>(f.sample.keys.size());  // K: dense count vectors
  state.counters["distinct"] = static_cast<double>(f.distinct());
  state.counters["window"] = static_cast<double>(f.sample.window->size());
}
BENCHMARK(BM_Evaluator_Evaluate)->Arg(256)->Arg(65536)->Unit(benchmark::kMillisecond);

void BM_Model_Sample(benchmark::State& state) {
  Fixture& f = FixtureFor(state.range(0));
  for (auto _ : state) {
    ModelSample sample = f.model->Sample();
    benchmark::DoNotOptimize(sample);
  }
  state.counters["ids"] = static_cast<double>(f.sample.keys.size());
}
BENCHMARK(BM_Model_Sample)->Arg(256)->Arg(65536)->Unit(benchmark::kMicrosecond);

// How long ingest into a model waits while the evaluation copies its window (Sample holds the
// model's lock for the copy). Arg 0: K = 256 (1 MiB byte ring), 65,536 (4 MiB id ring); arg 1:
// 1 with a thread taking a sample every 5 ms, 0 without (the baseline). Reports the longest
// single Ingest call of a short record in microseconds.
void BM_Model_IngestWhileSampling(benchmark::State& state) {
  Fixture& f = FixtureFor(state.range(0));
  std::atomic<bool> stop{false};
  std::thread sampler;
  if (state.range(1) == 1) {
    sampler = std::thread([&] {
      // Paced like an evaluation interval, so each sample meets an ingest waiting on it
      // rather than starving it with back-to-back samples.
      while (!stop) {
        benchmark::DoNotOptimize(f.model->Sample());
        std::this_thread::sleep_for(std::chrono::milliseconds(5));
      }
    });
  }
  const std::string record = state.range(0) > 256 ? "t1 t2\n" : "ts=1 gauge=g01\n";
  double longest = 0;
  for (auto _ : state) {
    const auto start = std::chrono::steady_clock::now();
    f.model->Ingest(record);
    longest = std::max(
        longest, std::chrono::duration<double, std::micro>(std::chrono::steady_clock::now() - start)
                     .count());
  }
  stop = true;
  if (sampler.joinable()) sampler.join();
  state.counters["longest_us"] = longest;
}
BENCHMARK(BM_Model_IngestWhileSampling)
    ->Args({256, 0})
    ->Args({256, 1})
    ->Args({65536, 0})
    ->Args({65536, 1})
    ->Iterations(2000000)
    ->Unit(benchmark::kMicrosecond);

// Arg 0: bytes model; 1: tokens model (digits masked, as the default config has it).
void BM_Model_Ingest(benchmark::State& state) {
  static const std::vector<std::string> lines = GaugeLines(8 << 20);
  SteadyClock clock;
  Model model(state.range(0) == 0 ? BytesSpec() : TokensSpec(true), WindowSpec{.symbols = kWindow},
              clock);
  size_t bytes = 0;
  for (const auto& line : lines) bytes += line.size();
  for (auto _ : state) {
    for (const auto& line : lines) model.Ingest(line);
  }
  state.SetBytesProcessed(static_cast<int64_t>(state.iterations() * bytes));
  state.SetItemsProcessed(static_cast<int64_t>(state.iterations() * lines.size()));
  state.SetLabel(state.range(0) == 0 ? "bytes" : "tokens");
}
BENCHMARK(BM_Model_Ingest)->Arg(0)->Arg(1)->Unit(benchmark::kMillisecond);

// The lines cut into runs of whole lines of up to 64 KiB (what one received buffer holds),
// each with its record count.
std::vector<std::pair<std::string, uint64_t>> RunsOf(const std::vector<std::string>& lines) {
  std::vector<std::pair<std::string, uint64_t>> out(1);
  for (const auto& line : lines) {
    if (out.back().first.size() + line.size() > 65536) out.emplace_back();
    out.back().first += line;
    ++out.back().second;
  }
  return out;
}

// The daemon's path for `lines` framing: the whole lines of each 64 KiB received buffer as one
// run (Model::IngestRun), against one Ingest call per line above.
void BM_Model_IngestRun(benchmark::State& state) {
  static const std::vector<std::string> lines = GaugeLines(8 << 20);
  static const auto runs = RunsOf(lines);
  SteadyClock clock;
  Model model(state.range(0) == 0 ? BytesSpec() : TokensSpec(true), WindowSpec{.symbols = kWindow},
              clock);
  size_t bytes = 0;
  for (const auto& line : lines) bytes += line.size();
  for (auto _ : state) {
    for (const auto& [run, records] : runs) model.IngestRun(run, records);
  }
  state.SetBytesProcessed(static_cast<int64_t>(state.iterations() * bytes));
  state.SetItemsProcessed(static_cast<int64_t>(state.iterations() * lines.size()));
  state.SetLabel(state.range(0) == 0 ? "bytes" : "tokens");
}
BENCHMARK(BM_Model_IngestRun)->Arg(0)->Arg(1)->Unit(benchmark::kMillisecond);

// One model fed by 1 or 2 threads at once (the daemon's io threads on one stream), in wall
// time: bytes are counted and tokens symbolized outside the model's lock, so two threads
// should come close to twice one thread's rate; what stays under the lock (the window push,
// adding 256 counts or the ids) bounds it.
void BM_Model_IngestRunShared(benchmark::State& state) {
  static const std::vector<std::string> lines = GaugeLines(8 << 20);
  static const auto runs = RunsOf(lines);
  static SteadyClock clock;
  static Model bytes_model(BytesSpec(), WindowSpec{.symbols = kWindow}, clock);
  static Model tokens_model(TokensSpec(true), WindowSpec{.symbols = kWindow}, clock);
  Model& model = state.range(0) == 0 ? bytes_model : tokens_model;
  size_t bytes = 0;
  for (const auto& line : lines) bytes += line.size();
  for (auto _ : state) {
    // Each thread starts at a different run, as different connections would.
    const size_t offset = static_cast<size_t>(state.thread_index()) * runs.size() / 2;
    for (size_t i = 0; i < runs.size(); ++i) {
      const auto& [run, records] = runs[(i + offset) % runs.size()];
      model.IngestRun(run, records);
    }
  }
  state.SetBytesProcessed(static_cast<int64_t>(state.iterations() * bytes));
  state.SetLabel(state.range(0) == 0 ? "bytes" : "tokens");
}
BENCHMARK(BM_Model_IngestRunShared)
    ->Arg(0)
    ->Arg(1)
    ->Threads(1)
    ->Threads(2)
    ->UseRealTime()
    ->Unit(benchmark::kMillisecond);

// The least a window can do with a record: copy it into a 1 MiB ring.
void BM_Memcpy_Baseline(benchmark::State& state) {
  static const std::vector<std::string> lines = GaugeLines(8 << 20);
  std::vector<char> ring(kWindow);
  size_t bytes = 0;
  for (const auto& line : lines) bytes += line.size();
  for (auto _ : state) {
    size_t head = 0;
    for (const auto& line : lines) {
      const size_t first = std::min(line.size(), ring.size() - head);
      std::memcpy(ring.data() + head, line.data(), first);
      std::memcpy(ring.data(), line.data() + first, line.size() - first);
      head = (head + line.size()) % ring.size();
    }
    benchmark::DoNotOptimize(ring.data());
    benchmark::ClobberMemory();
  }
  state.SetBytesProcessed(static_cast<int64_t>(state.iterations() * bytes));
  state.SetItemsProcessed(static_cast<int64_t>(state.iterations() * lines.size()));
}
BENCHMARK(BM_Memcpy_Baseline)->Unit(benchmark::kMillisecond);

}  // namespace
}  // namespace codedrift
