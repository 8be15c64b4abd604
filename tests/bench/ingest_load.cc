// ingest_load: loopback load for codedriftd's benchmarks in `make bench`.
//
//   ingest_load suite CAPTURE [--mib M] [--runs R] [--udp-seconds S] [--udp-runs R]
//                     [--only tcp|udp|rss]
//       starts codedriftd (this build's) and prints the daemon tables: TCP ingest against a
//       plain receiver measured in the same run, UDP rate without loss, RSS per model.
//   ingest_load baseline tcp|udp
//       a plain recv-and-discard receiver on 127.0.0.1:0; prints its port, then the count when
//       stdin closes.
//   ingest_load send CAPTURE --port P [--connections N] [--mib M]
//       sends M MiB of the capture's lines over N connections; MB/s and records/s until the
//       receiver closed every connection (so: as the receiver consumed them).
//   ingest_load udp CAPTURE --port P --rate R [--seconds S] [--senders N]
//       paced 200-byte datagrams from N threads.
#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <map>
#include <string>
#include <vector>

#include "ingest_load_net.h"
#include "ingest_load_suite.h"

namespace codedrift::bench {
namespace {

int Usage() {
  std::fprintf(stderr,
               "usage: ingest_load suite CAPTURE [--mib M] [--runs R] [--udp-seconds S] "
               "[--udp-runs R] [--only tcp|udp|rss]\n"
               "       ingest_load baseline tcp|udp\n"
               "       ingest_load send CAPTURE --port P [--connections N] [--mib M]\n"
               "       ingest_load udp CAPTURE --port P --rate R [--seconds S] [--senders N]\n");
  return 2;
}

// Positional arguments and --flag value pairs.
struct Args {
  std::vector<std::string> positional;
  std::map<std::string, std::string> flags;

  double Number(const std::string& name, double fallback) const {
    const auto it = flags.find(name);
    return it == flags.end() ? fallback : std::strtod(it->second.c_str(), nullptr);
  }
  std::string Text(const std::string& name) const {
    const auto it = flags.find(name);
    return it == flags.end() ? "" : it->second;
  }
};

bool Parse(int argc, char** argv, Args& args) {
  for (int i = 1; i < argc; ++i) {
    const std::string arg = argv[i];
    if (arg.rfind("--", 0) == 0) {
      if (i + 1 >= argc) return false;
      args.flags[arg.substr(2)] = argv[++i];
    } else {
      args.positional.push_back(arg);
    }
  }
  return !args.positional.empty();
}

int Suite(const Args& args) {
  if (args.positional.size() != 2) return Usage();
  auto capture = Capture::Load(args.positional[1]);
  if (!capture.ok()) {
    std::fprintf(stderr, "%s\n", capture.error().message.c_str());
    return 1;
  }
  SuiteOptions options;
  const double mib = args.Number(
      "mib", static_cast<double>(capture.value().text().size()) / static_cast<double>(1 << 20));
  options.tcp_bytes = static_cast<uint64_t>(mib * (1 << 20));
  options.runs = static_cast<int>(args.Number("runs", options.runs));
  options.udp_seconds = args.Number("udp-seconds", options.udp_seconds);
  options.udp_runs = static_cast<int>(args.Number("udp-runs", options.udp_runs));
  const std::string only = args.Text("only");
  bool ok = true;
  if (only.empty() || only == "tcp") ok = RunTcpSuite(capture.value(), options) && ok;
  if (only.empty() || only == "udp") ok = RunUdpSuite(capture.value(), options) && ok;
  if (only.empty() || only == "rss") ok = RunRssSuite(capture.value(), options) && ok;
  std::fflush(stdout);
  return ok ? 0 : 1;
}

int Baseline(const Args& args) {
  if (args.positional.size() != 2) return Usage();
  std::string line;
  if (args.positional[1] == "tcp") {
    PlainTcpReceiver receiver;
    if (auto started = receiver.Start(); !started.ok()) return 1;
    std::printf("listening on tcp://127.0.0.1:%u; close stdin to stop\n", receiver.port());
    std::fflush(stdout);
    while (std::getline(std::cin, line)) {
    }
    receiver.Stop();
    std::printf("received %llu bytes using %.3f CPU-s\n",
                static_cast<unsigned long long>(receiver.bytes()), receiver.cpu_seconds());
    return 0;
  }
  if (args.positional[1] == "udp") {
    PlainUdpReceiver receiver(8 << 20);
    if (auto started = receiver.Start(); !started.ok()) return 1;
    std::printf("listening on udp://127.0.0.1:%u; close stdin to stop\n", receiver.port());
    std::fflush(stdout);
    while (std::getline(std::cin, line)) {
    }
    receiver.Stop();
    std::printf("received %llu datagrams\n", static_cast<unsigned long long>(receiver.datagrams()));
    return 0;
  }
  return Usage();
}

int Send(const Args& args, bool udp) {
  const auto port = static_cast<uint16_t>(args.Number("port", 0));
  if (args.positional.size() != 2 || port == 0) return Usage();
  auto capture = Capture::Load(args.positional[1]);
  if (!capture.ok()) {
    std::fprintf(stderr, "%s\n", capture.error().message.c_str());
    return 1;
  }
  if (udp) {
    const UdpRun run =
        SendUdp(port, capture.value().Datagrams(4096, 200), args.Number("rate", 0),
                args.Number("seconds", 1), static_cast<int>(args.Number("senders", 1)));
    std::printf("sent %llu datagrams in %.3f s (%.0f/s)\n",
                static_cast<unsigned long long>(run.sent), run.seconds, run.rate());
    return 0;
  }
  const double mib = args.Number(
      "mib", static_cast<double>(capture.value().text().size()) / static_cast<double>(1 << 20));
  const int connections = static_cast<int>(args.Number("connections", 1));
  const auto slices = capture.value().Slices(connections, static_cast<uint64_t>(mib * (1 << 20)));
  const TcpRun run = SendTcp(port, capture.value(), slices);
  if (!run.error.empty()) {
    std::fprintf(stderr, "%s\n", run.error.c_str());
    return 1;
  }
  std::printf("%llu bytes, %llu records over %d connections in %.3f s: %.0f MB/s, %.0f records/s\n",
              static_cast<unsigned long long>(run.bytes),
              static_cast<unsigned long long>(run.records), connections, run.seconds,
              static_cast<double>(run.bytes) / run.seconds / 1e6,
              static_cast<double>(run.records) / run.seconds);
  return 0;
}

}  // namespace
}  // namespace codedrift::bench

int main(int argc, char** argv) {
  using namespace codedrift::bench;
  Args args;
  if (!Parse(argc, argv, args)) return Usage();
  const std::string& mode = args.positional[0];
  if (mode == "suite") return Suite(args);
  if (mode == "baseline") return Baseline(args);
  if (mode == "send") return Send(args, false);
  if (mode == "udp") return Send(args, true);
  return Usage();
}
