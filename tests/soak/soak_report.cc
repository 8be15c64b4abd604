#include "soak_report.h"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace codedrift::soak {
namespace {

std::string StreamLabel(const SoakStream& stream) { return "stream=\"" + stream.name + "\""; }

double Delta(const SamplePoint& before, const SamplePoint& after, const std::string& name,
             const std::vector<std::string>& labels) {
  return after.scrape.Value(name, labels) - before.scrape.Value(name, labels);
}

// "0.25" for 250 ms; bounds over a second as seconds; +Inf as ">10s".
std::string Bound(double seconds) {
  char text[16];
  if (std::isinf(seconds)) return ">10s";
  if (seconds <= 0) return "-";
  std::snprintf(text, sizeof text, "%g", seconds * 1e3);
  return text;
}

}  // namespace

void PrintHeader(const std::vector<SoakStream>& streams) {
  std::printf("%7s %7s %7s", "t s", "MB/s", "krec/s");
  for (const SoakStream& stream : streams) {
    const std::string unit = stream.kind == StreamKind::kUdp ? " kdg/s" : " MB/s";
    std::printf(" %13s", (stream.name + unit).c_str());
  }
  std::printf(" %7s %7s %5s %8s %8s %6s %9s %7s\n", "RSS MB", "RSS MB", "evals", "eval ms",
              "max ms<=", "alerts", "hook 2xx", "reloads");
  std::printf("%7s %7s %7s", "", "", "");
  for (size_t i = 0; i < streams.size(); ++i) std::printf(" %13s", "");
  std::printf(" %7s %7s %5s %8s %8s %6s %9s %7s\n", "low", "high", "", "mean", "", "total",
              "/failed", "");
  std::fflush(stdout);
}

double IntervalMegabytesPerSecond(const std::vector<SoakStream>& streams, const SamplePoint& before,
                                  const SamplePoint& after) {
  const double dt = std::max(after.seconds - before.seconds, 1e-3);
  double bytes = 0;
  for (const SoakStream& s : streams) {
    bytes += Delta(before, after, "codedrift_bytes_total", {StreamLabel(s)});
  }
  return bytes / dt / 1e6;
}

double IntervalRecordsPerSecond(const std::vector<SoakStream>& streams, const SamplePoint& before,
                                const SamplePoint& after) {
  const double dt = std::max(after.seconds - before.seconds, 1e-3);
  double records = 0;
  for (const SoakStream& s : streams) {
    records += Delta(before, after, "codedrift_records_total", {StreamLabel(s)});
  }
  return records / dt;
}

void PrintRow(const std::vector<SoakStream>& streams, const SamplePoint& before,
              const SamplePoint& after) {
  const double dt = std::max(after.seconds - before.seconds, 1e-3);
  std::printf("%7.1f %7.1f %7.1f", after.seconds,
              IntervalMegabytesPerSecond(streams, before, after),
              IntervalRecordsPerSecond(streams, before, after) / 1e3);
  for (const SoakStream& s : streams) {
    const bool udp = s.kind == StreamKind::kUdp;
    const double delta = Delta(
        before, after, udp ? "codedrift_records_total" : "codedrift_bytes_total", {StreamLabel(s)});
    std::printf(" %13.1f", udp ? delta / dt / 1e3 : delta / dt / 1e6);
  }
  const IntervalLatency latency = Between(before.scrape.Evaluations(), after.scrape.Evaluations());
  const Scrape& now = after.scrape;
  char hooks[32];
  std::snprintf(hooks, sizeof hooks, "%llu/%llu",
                static_cast<unsigned long long>(
                    now.Count("codedrift_webhook_deliveries_total", {"result=\"delivered\""})),
                static_cast<unsigned long long>(now.Count("codedrift_webhook_deliveries_total",
                                                          {"result=\"failed_attempt\""})));
  std::printf(" %7.1f %7.1f %5llu %8.2f %8s %6.0f %9s %7d\n",
              static_cast<double>(after.rss_bytes) / 1e6,
              static_cast<double>(after.rss_peak_bytes) / 1e6,
              static_cast<unsigned long long>(latency.evaluations), latency.mean_seconds * 1e3,
              Bound(latency.max_bound_seconds).c_str(), now.Sum("codedrift_alerts_total"), hooks,
              after.reloads);
  std::fflush(stdout);
}

void RssRange::Add(uint64_t bytes) {
  low_ = reads_ == 0 ? bytes : std::min(low_, bytes);
  high_ = std::max(high_, bytes);
  ++reads_;
}

RssJudgement JudgeRss(const std::vector<SamplePoint>& samples, double warmup_seconds) {
  RssJudgement j;
  for (const SamplePoint& s : samples) {
    j.peak_mb = std::max(j.peak_mb, static_cast<double>(s.rss_peak_bytes) / 1e6);
  }
  if (samples.empty()) return j;
  // Growth is judged on each interval's floor, not on a read at the sample instant. Every
  // evaluation copies the count windows (up to 4 MB each here) and every checkpoint round
  // encodes them, for tens of milliseconds; the soak's clock starts within 0.1 s of the daemon's
  // evaluation clock (the ready file) and samples every 5 evaluation periods, so its instants
  // sit at one point of the evaluation pass for the whole run and, in a measured run, half of
  // them caught a copy. Reads every <= 0.25 s fall at 8 points of the 2 s period, so the floor
  // misses the copies; a leak or fragmentation raises the floor as well. Medians over a minute
  // keep one odd interval out.
  constexpr double kSpan = 60;
  const double end = samples.back().seconds;
  const auto median_mb = [&](double from, double to) {
    std::vector<double> mb;
    for (const SamplePoint& s : samples) {
      if (s.seconds >= from && s.seconds < to) mb.push_back(static_cast<double>(s.rss_bytes) / 1e6);
    }
    std::sort(mb.begin(), mb.end());
    return mb.size() < 3 ? -1.0 : mb[mb.size() / 2];
  };
  // The first minute after the warm-up against the last minute, the two never overlapping.
  if (end - kSpan < warmup_seconds + kSpan) return j;
  j.reference_mb = median_mb(warmup_seconds, warmup_seconds + kSpan);
  j.final_mb = median_mb(end - kSpan, end + 1);
  if (j.reference_mb <= 0 || j.final_mb <= 0) return j;
  j.judged = true;
  j.reference_at = warmup_seconds;
  j.growth = j.final_mb / j.reference_mb - 1;
  return j;
}

bool Verdict::Check(bool ok, const std::string& what) {
  std::printf("  %-6s %s\n", ok ? "ok" : "FAILED", what.c_str());
  std::fflush(stdout);
  if (!ok) ++failures_;
  return ok;
}

}  // namespace codedrift::soak
