// Symbolizer, byte-histogram and line-framing throughput against same-run baselines (memchr
// newline count, split-only tokenizing), so results read as ratios rather than
// machine-dependent absolutes.
#include <array>
#include <cstdio>
#include <cstring>
#include <random>
#include <string>
#include <string_view>
#include <vector>

#include <benchmark/benchmark.h>

#include "codedrift/byte_histogram.h"
#include "codedrift/framer.h"
#include "codedrift/symbolizer.h"

namespace codedrift {
namespace {

// Invented telemetry from a fleet of soil sensors in orchards: key=value lines, one per
// reading, with an occasional extra field and a status word. Seeded, so every run measures
// the same bytes.
std::string MakeTelemetry(size_t target_bytes) {
  std::mt19937_64 rng(1733059200);
  std::uniform_int_distribution<int> node(1, 48);
  std::normal_distribution<double> moisture(24.0, 4.0);
  std::normal_distribution<double> temp(14.0, 3.0);
  std::uniform_int_distribution<int> batt(340, 420);
  std::uniform_int_distribution<int> rssi(-110, -60);
  std::uniform_int_distribution<int> pct(0, 99);
  static constexpr std::array<const char*, 4> kStatus = {"ok", "ok", "low_batt", "retry"};

  std::string out;
  out.reserve(target_bytes + 256);
  long long t = 1733059200;
  char line[256];
  while (out.size() < target_bytes) {
    t += 1 + pct(rng) % 3;
    const int n = node(rng);
    const int roll = pct(rng);
    int len = std::snprintf(line, sizeof line,
                            "t=%lld node=orchard-%d soil_moisture=%.1f temp=%.1f batt=%d.%02d", t,
                            n, moisture(rng), temp(rng), batt(rng) / 100, batt(rng) % 100);
    if (roll < 20) {
      len +=
          std::snprintf(line + len, sizeof line - static_cast<size_t>(len), " rssi=%d", rssi(rng));
    }
    len += std::snprintf(line + len, sizeof line - static_cast<size_t>(len), " %s\n",
                         roll < 90 ? "ok" : kStatus[static_cast<size_t>(roll % 4)]);
    out.append(line, static_cast<size_t>(len));
  }
  return out;
}

const std::string& BigBuffer() {
  static const std::string buffer = MakeTelemetry(size_t{32} << 20);
  return buffer;
}

const std::vector<std::string_view>& Lines() {
  static const std::vector<std::string_view> lines = [] {
    const std::string& buffer = BigBuffer();
    std::vector<std::string_view> out;
    size_t start = 0;
    // The first 8 MiB: enough lines to overflow the token table with timestamps, small
    // enough for many iterations.
    while (start < (size_t{8} << 20)) {
      const size_t end = buffer.find('\n', start);
      out.emplace_back(buffer.data() + start, end + 1 - start);
      start = end + 1;
    }
    return out;
  }();
  return lines;
}

size_t TotalBytes(const std::vector<std::string_view>& lines) {
  size_t total = 0;
  for (auto line : lines) total += line.size();
  return total;
}

void BM_CountBytes(benchmark::State& state) {
  const std::string& buffer = BigBuffer();
  for (auto _ : state) {
    uint64_t histogram[256] = {};
    CountBytes(buffer, histogram);
    benchmark::DoNotOptimize(histogram);
  }
  state.SetBytesProcessed(static_cast<int64_t>(state.iterations() * buffer.size()));
}
BENCHMARK(BM_CountBytes)->Unit(benchmark::kMillisecond);

void BM_CountBytesParallel(benchmark::State& state) {
  const std::string& buffer = BigBuffer();
  const int threads = static_cast<int>(state.range(0));
  for (auto _ : state) {
    uint64_t histogram[256] = {};
    CountBytesParallel(buffer, histogram, threads);
    benchmark::DoNotOptimize(histogram);
  }
  state.SetBytesProcessed(static_cast<int64_t>(state.iterations() * buffer.size()));
}
BENCHMARK(BM_CountBytesParallel)->Arg(2)->Unit(benchmark::kMillisecond)->UseRealTime();

// Baseline: what `wc -l` does, counting newlines with memchr over the same buffer.
void BM_Memchr_Newlines(benchmark::State& state) {
  const std::string& buffer = BigBuffer();
  for (auto _ : state) {
    size_t lines = 0;
    const char* p = buffer.data();
    const char* const end = p + buffer.size();
    while ((p = static_cast<const char*>(std::memchr(p, '\n', static_cast<size_t>(end - p))))) {
      ++lines;
      ++p;
    }
    benchmark::DoNotOptimize(lines);
  }
  state.SetBytesProcessed(static_cast<int64_t>(state.iterations() * buffer.size()));
}
BENCHMARK(BM_Memchr_Newlines)->Unit(benchmark::kMillisecond);

// Line framing of 64 KiB receive buffers, as a connection sees them: range(0) = 0 finds each
// line with Feed (one memchr and one call per line), 1 takes the runs of whole lines with
// FeedRuns (the daemon's path). Compare both with BM_Memchr_Newlines.
void BM_LineFramer_Chunks(benchmark::State& state) {
  const std::string& buffer = BigBuffer();
  constexpr size_t kChunk = 64 * 1024;
  LineFramer framer(64 * 1024, OverlongPolicy::kTruncate);
  uint64_t records = 0;
  const auto count = [&](std::string_view) { ++records; };
  for (auto _ : state) {
    for (size_t at = 0; at < buffer.size(); at += kChunk) {
      const std::string_view chunk = std::string_view(buffer).substr(at, kChunk);
      if (state.range(0) == 0) {
        framer.Feed(chunk, count);
        continue;
      }
      framer.FeedRuns(chunk, count,
                      [&](std::string_view, uint64_t whole_records) { records += whole_records; });
    }
    benchmark::DoNotOptimize(records);
  }
  state.SetBytesProcessed(static_cast<int64_t>(state.iterations() * buffer.size()));
}
BENCHMARK(BM_LineFramer_Chunks)->Arg(0)->Arg(1)->Unit(benchmark::kMillisecond);

// Tokens, record by record as the daemon sees them; range(0) = mask_digits. The symbolizer
// lives across iterations, so after the first pass the table is warm and full (timestamps
// alone exceed max_distinct unless masked), as it is in a long-running model.
void BM_TokenSymbolizer_Append(benchmark::State& state) {
  const auto& lines = Lines();
  TokenOptions options;
  options.mask_digits = state.range(0) != 0;
  auto symbolizer = MakeTokenSymbolizer(options);
  std::vector<SymbolId> ids;
  ids.reserve(64);
  size_t symbols = 0;
  for (auto _ : state) {
    for (auto line : lines) {
      ids.clear();
      symbols += symbolizer->Append(line, ids);
    }
    benchmark::DoNotOptimize(ids.data());
  }
  state.SetBytesProcessed(static_cast<int64_t>(state.iterations() * TotalBytes(lines)));
  state.counters["symbols_per_iter"] =
      static_cast<double>(symbols) / static_cast<double>(state.iterations());
  state.counters["distinct"] = symbolizer->IdLimit();
}
BENCHMARK(BM_TokenSymbolizer_Append)->Arg(0)->Arg(1)->Unit(benchmark::kMillisecond);

// Baseline: the same delimiter-table split with no masking, hashing or lookup.
void BM_TokenSplit_Baseline(benchmark::State& state) {
  const auto& lines = Lines();
  std::array<unsigned char, 256> is_delimiter{};
  for (char c : std::string_view(" =,\n")) is_delimiter[static_cast<unsigned char>(c)] = 1;
  for (auto _ : state) {
    size_t tokens = 0;
    size_t token_bytes = 0;
    for (auto line : lines) {
      const char* p = line.data();
      const char* const end = p + line.size();
      while (true) {
        while (p != end && is_delimiter[static_cast<unsigned char>(*p)]) ++p;
        if (p == end) break;
        const char* const start = p;
        while (p != end && !is_delimiter[static_cast<unsigned char>(*p)]) ++p;
        ++tokens;
        token_bytes += static_cast<size_t>(p - start);
      }
    }
    benchmark::DoNotOptimize(tokens);
    benchmark::DoNotOptimize(token_bytes);
  }
  state.SetBytesProcessed(static_cast<int64_t>(state.iterations() * TotalBytes(lines)));
}
BENCHMARK(BM_TokenSplit_Baseline)->Unit(benchmark::kMillisecond);

// Byte blocks (bytes:2) through the interning table, for comparison with single bytes.
void BM_BytesSymbolizer_Append(benchmark::State& state) {
  const auto& lines = Lines();
  auto symbolizer = MakeBytesSymbolizer(static_cast<int>(state.range(0)));
  std::vector<SymbolId> ids;
  for (auto _ : state) {
    for (auto line : lines) {
      ids.clear();
      symbolizer->Append(line, ids);
    }
    benchmark::DoNotOptimize(ids.data());
  }
  state.SetBytesProcessed(static_cast<int64_t>(state.iterations() * TotalBytes(lines)));
  state.counters["distinct"] = symbolizer->IdLimit();
}
BENCHMARK(BM_BytesSymbolizer_Append)->Arg(1)->Arg(2)->Arg(4)->Unit(benchmark::kMillisecond);

}  // namespace
}  // namespace codedrift
