// The daemon benchmark suites of `make bench`, each against a baseline measured in the same
// run: TCP ingest (bytes and tokens models, 1 and 16 connections) against a plain
// recv-and-discard receiver, the highest UDP datagram rate without loss, and resident memory
// per model. Each prints its table to stdout and returns false when a run failed outright
// (a goal missed is reported, not a failure).
#pragma once

#include <cstdint>
#include <string>

#include "ingest_load_net.h"

namespace codedrift::bench {

struct SuiteOptions {
  uint64_t tcp_bytes = 256ull << 20;  // per TCP run, all connections together
  int runs = 5;                       // per measurement; medians are reported
  double udp_seconds = 1.0;           // per UDP step
  int udp_runs = 3;
  std::string evaluate_every = "500ms";
};

bool RunTcpSuite(const Capture& capture, const SuiteOptions& options);
bool RunUdpSuite(const Capture& capture, const SuiteOptions& options);
bool RunRssSuite(const Capture& capture, const SuiteOptions& options);

}  // namespace codedrift::bench
