// DaemonMetrics: the daemon's Prometheus exposition (DESIGN.md §5 names), rendered as text for
// GET /metrics.
#pragma once

#include <cstdint>
#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "stream_counters.h"

namespace prometheus {
class Histogram;
class Registry;
}  // namespace prometheus

namespace codedrift {

// One model's figures at its latest evaluation, as the integrator's evaluator computed them.
// Absent optionals and NaN doubles leave their sample out of the exposition.
struct ModelMetricsSnapshot {
  std::string stream;
  std::string model;
  double entropy_plugin = 0;
  double entropy_mm = 0;
  double entropy_stderr = 0;
  std::optional<double> deployed_mean;
  std::optional<double> retrained_mean;
  std::optional<double> redundancy;
  std::optional<double> saving;
  std::optional<double> saving_lower;
  std::optional<double> payback_seconds;
  int state = 0;         // 0 fit, 1 drifting, 2 stale
  double kraft_sum = 0;  // NaN when the model has no table
  uint64_t window_symbols = 0;
  uint64_t symbols_total = 0;
  uint64_t unknown_symbols_total = 0;
  uint64_t alerts_total = 0;
  // (symbol label, window count); filled only when the model has export_counts: true.
  std::vector<std::pair<std::string, uint64_t>> symbol_counts;
};

// One process-level sample (webhook deliveries, checkpoint failures, proposal failures):
// counters the daemon keeps elsewhere, copied in at publish time.
struct ProcessSample {
  std::string name;  // full metric name, e.g. codedrift_webhook_deliveries_total
  std::string help;
  bool counter = true;
  std::vector<std::pair<std::string, std::string>> labels;
  double value = 0;
};

// A stream's name and its counters (shared with the listener that writes them).
struct StreamCountersEntry {
  std::string stream;
  std::shared_ptr<const StreamCounters> counters;
};

// Owns the metric state the exporter renders: stream counters are read from the listeners'
// atomics and model figures from the latest snapshot, both at scrape time. Thread-safe: every
// method may be called from any thread at any time.
class DaemonMetrics {
 public:
  // The Content-Type GET /metrics answers with (Prometheus text format 0.0.4).
  static constexpr std::string_view kContentType = "text/plain; version=0.0.4; charset=utf-8";

  explicit DaemonMetrics(std::string_view version);
  ~DaemonMetrics();
  DaemonMetrics(const DaemonMetrics&) = delete;
  DaemonMetrics& operator=(const DaemonMetrics&) = delete;

  // Replaces the set of streams exported (at start and after a reload).
  void SetStreams(std::vector<StreamCountersEntry> streams);
  // Replaces the per-model figures with those of the latest evaluation.
  void UpdateModels(std::vector<ModelMetricsSnapshot> models);
  // Replaces the process-level samples (at each evaluation).
  void UpdateProcess(std::vector<ProcessSample> samples);
  // Records how long one evaluation pass took (codedrift_evaluation_seconds).
  void ObserveEvaluation(double seconds);

  // The whole exposition in the Prometheus text format.
  std::string RenderMetrics() const;

 private:
  std::shared_ptr<prometheus::Registry> registry_;  // process metrics (histogram, build info)
  prometheus::Histogram* evaluation_seconds_;       // owned by registry_

  mutable std::mutex mu_;  // guards the two snapshots below (swapped whole, read by copy)
  std::shared_ptr<const std::vector<StreamCountersEntry>> streams_;
  std::shared_ptr<const std::vector<ModelMetricsSnapshot>> models_;
  std::shared_ptr<const std::vector<ProcessSample>> process_;
};

}  // namespace codedrift
