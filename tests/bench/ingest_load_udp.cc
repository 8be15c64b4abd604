// The highest UDP datagram rate without loss, daemon against a plain receiver
// (ingest_load_suite.h).
#include <algorithm>
#include <cstdio>
#include <functional>
#include <string>
#include <thread>
#include <vector>

#include "ingest_load_daemon.h"
#include "ingest_load_suite.h"

namespace codedrift::bench {
namespace {

constexpr size_t kDatagramBytes = 200;
constexpr int kReceiveBuffer = 8 << 20;  // the daemon's default receive_buffer_bytes
constexpr double kRates[] = {25e3,  50e3,  100e3, 150e3, 200e3, 250e3,
                             300e3, 400e3, 500e3, 600e3, 800e3, 1e6};
constexpr int kSenders = 2;  // one sender's ceiling is 0.15-0.3M/s here (DESIGN.md section 7)

// Waits until `count()` reaches `target`, or stops moving for a while (the rest was lost);
// returns the final count.
uint64_t Settle(const std::function<uint64_t()>& count, uint64_t target) {
  uint64_t last = count();
  int still = 0;
  while (last < target && still < 10) {
    std::this_thread::sleep_for(std::chrono::milliseconds(50));  // polling interval
    const uint64_t now = count();
    still = now == last ? still + 1 : 0;
    last = now;
  }
  return last;
}

struct Step {
  double rate = 0;
  std::vector<double> achieved;
  std::vector<uint64_t> base_lost, daemon_lost;
};

// A rate passes for a receiver when most of its runs lost nothing.
bool Passes(const std::vector<uint64_t>& lost) {
  const auto clean = std::count(lost.begin(), lost.end(), 0u);
  return static_cast<size_t>(clean) * 2 > lost.size();
}

std::string Losses(const std::vector<uint64_t>& lost) {
  std::string text;
  for (uint64_t n : lost) {
    if (!text.empty()) text += ',';
    text += std::to_string(n);
  }
  return text;
}

}  // namespace

bool RunUdpSuite(const Capture& capture, const SuiteOptions& options) {
  const std::vector<std::string> datagrams = capture.Datagrams(4096, kDatagramBytes);
  PlainUdpReceiver baseline(kReceiveBuffer);
  if (auto started = baseline.Start(); !started.ok()) {
    std::fprintf(stderr, "%s\n", started.error().message.c_str());
    return false;
  }
  BenchDaemon daemon(
      DaemonConfigText({{.name = "packets", .udp = true, .models = {{"m", ModelKind::kBytes}}}},
                       options.evaluate_every));
  if (auto ready = daemon.WaitReady(); !ready.ok()) {
    std::fprintf(stderr, "%s\n", ready.error().message.c_str());
    return false;
  }
  const auto daemon_records = [&] {
    return daemon.StreamCounter("codedrift_records_total", "packets");
  };

  std::vector<Step> steps;
  uint64_t daemon_sent = 0;
  bool sender_ceiling = false;
  for (double rate : kRates) {
    Step step{.rate = rate};
    for (int run = 0; run < options.udp_runs; ++run) {
      const uint64_t base0 = baseline.datagrams();
      const UdpRun base = SendUdp(baseline.port(), datagrams, rate, options.udp_seconds, kSenders);
      const uint64_t base_got = Settle([&] { return baseline.datagrams() - base0; }, base.sent);
      step.base_lost.push_back(base.sent - std::min(base.sent, base_got));

      const uint64_t daemon0 = daemon_records();
      const UdpRun sent =
          SendUdp(daemon.port("packets"), datagrams, rate, options.udp_seconds, kSenders);
      const uint64_t got = Settle([&] { return daemon_records() - daemon0; }, sent.sent);
      step.daemon_lost.push_back(sent.sent - std::min(sent.sent, got));
      daemon_sent += got;
      step.achieved.push_back(std::min(base.rate(), sent.rate()));
    }
    steps.push_back(step);
    const double achieved = *std::min_element(step.achieved.begin(), step.achieved.end());
    if (achieved < 0.9 * rate) {
      sender_ceiling = true;
      break;
    }
    if (!Passes(step.base_lost) && !Passes(step.daemon_lost)) break;
  }
  // The model counted every datagram that arrived (200 symbols each).
  const bool counted = BenchDaemon::Await(
      [&] { return daemon.ModelSymbols("packets", "m") == daemon_sent * kDatagramBytes; },
      std::chrono::seconds(60));
  const int stopped = daemon.Stop();
  baseline.Stop();

  std::printf(
      "\nUDP, %zu-byte datagrams, %.1f s per step, %d runs per step (datagrams lost per "
      "run); receive buffer %d bytes asked, %d granted to the baseline\n",
      kDatagramBytes, options.udp_seconds, options.udp_runs, kReceiveBuffer,
      baseline.granted_buffer_bytes());
  std::printf("  %10s %12s  %-22s %-22s\n", "rate/s", "sent/s (min)", "plain receiver lost",
              "codedriftd lost");
  double best_base = 0, best_daemon = 0;
  bool base_ok = true, daemon_ok = true;
  for (const Step& step : steps) {
    const double achieved = *std::min_element(step.achieved.begin(), step.achieved.end());
    std::printf("  %10.0f %12.0f  %-22s %-22s\n", step.rate, achieved,
                Losses(step.base_lost).c_str(), Losses(step.daemon_lost).c_str());
    if (achieved < 0.9 * step.rate) break;  // not this rate: the sender could not reach it
    base_ok = base_ok && Passes(step.base_lost);
    daemon_ok = daemon_ok && Passes(step.daemon_lost);
    if (base_ok) best_base = step.rate;
    if (daemon_ok) best_daemon = step.rate;
  }
  std::printf(
      "  highest rate without loss (most runs): plain receiver %.0f/s, codedriftd %.0f/s "
      "(%.2fx)%s\n",
      best_base, best_daemon, best_base > 0 ? best_daemon / best_base : 0,
      sender_ceiling ? "; the sender's ceiling ended the ladder" : "");
  std::printf("  codedrift_symbols_total %s 200 x the datagrams codedrift_records_total counted\n",
              counted ? "equals" : "DOES NOT equal");
  return counted && stopped == 0;
}

}  // namespace codedrift::bench
