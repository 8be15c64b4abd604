#include "metrics.h"

#include <cmath>
#include <map>

#include <prometheus/client_metric.h>
#include <prometheus/gauge.h>
#include <prometheus/histogram.h>
#include <prometheus/metric_family.h>
#include <prometheus/registry.h>
#include <prometheus/text_serializer.h>

namespace codedrift {
namespace {

using prometheus::ClientMetric;
using prometheus::MetricFamily;
using prometheus::MetricType;

// Families are built in a fixed order so the exposition is stable from scrape to scrape.
class FamilyBuilder {
 public:
  MetricFamily& Family(const std::string& name, const std::string& help, MetricType type) {
    auto it = index_.find(name);
    if (it != index_.end()) return families_[it->second];
    index_.emplace(name, families_.size());
    families_.push_back(MetricFamily{name, help, type, {}});
    return families_.back();
  }

  // Adds one sample; NaN values are left out (no figure is better than a meaningless one).
  void Sample(const std::string& name, const std::string& help, MetricType type,
              std::vector<ClientMetric::Label> labels, double value) {
    MetricFamily& family = Family(name, help, type);
    if (std::isnan(value)) return;
    ClientMetric metric;
    metric.label = std::move(labels);
    if (type == MetricType::Counter) {
      metric.counter.value = value;
    } else {
      metric.gauge.value = value;
    }
    family.metric.push_back(std::move(metric));
  }

  void Sample(const std::string& name, const std::string& help, MetricType type,
              std::vector<ClientMetric::Label> labels, const std::optional<double>& value) {
    Family(name, help, type);
    if (value.has_value()) Sample(name, help, type, std::move(labels), *value);
  }

  // Families with no sample are dropped: the text format has nothing to say about them.
  std::vector<MetricFamily> Take() {
    std::vector<MetricFamily> out;
    for (MetricFamily& family : families_) {
      if (!family.metric.empty()) out.push_back(std::move(family));
    }
    return out;
  }

 private:
  std::vector<MetricFamily> families_;
  std::map<std::string, size_t> index_;
};

constexpr MetricType kGauge = MetricType::Gauge;
constexpr MetricType kCounter = MetricType::Counter;

double Load(const std::atomic<uint64_t>& value) {
  return static_cast<double>(value.load(std::memory_order_relaxed));
}

void AddStream(FamilyBuilder& out, const StreamCountersEntry& entry) {
  const StreamCounters& c = *entry.counters;
  const ClientMetric::Label stream{"stream", entry.stream};
  out.Sample("codedrift_records_total", "Records delivered to the stream's models.", kCounter,
             {stream}, Load(c.records_total));
  out.Sample("codedrift_bytes_total", "Bytes read from the stream's sockets, framing included.",
             kCounter, {stream}, Load(c.bytes_total));
  for (size_t i = 0; i < kRecordRejectReasonCount; ++i) {
    const auto reason = static_cast<RecordRejectReason>(i);
    out.Sample("codedrift_records_rejected_total",
               "Records dropped or cut short, by reason (overlong lines are truncated or dropped "
               "per config).",
               kCounter, {stream, {"reason", std::string(ReasonLabel(reason))}},
               Load(c.records_rejected[i]));
  }
  out.Sample("codedrift_connections", "Open connections on the stream's listener.", kGauge,
             {stream}, static_cast<double>(c.connections.load(std::memory_order_relaxed)));
  for (size_t i = 0; i < kConnectionRejectReasonCount; ++i) {
    const auto reason = static_cast<ConnectionRejectReason>(i);
    out.Sample("codedrift_connections_rejected_total",
               "Connections refused before any byte was read, by reason.", kCounter,
               {stream, {"reason", std::string(ReasonLabel(reason))}},
               Load(c.connections_rejected[i]));
  }
  for (size_t i = 0; i < kConnectionCloseReasonCount; ++i) {
    const auto reason = static_cast<ConnectionCloseReason>(i);
    out.Sample("codedrift_connections_closed_total",
               "Accepted connections that ended, by reason (idle means no byte for idle_timeout).",
               kCounter, {stream, {"reason", std::string(ReasonLabel(reason))}},
               Load(c.connections_closed[i]));
  }
}

void AddModel(FamilyBuilder& out, const ModelMetricsSnapshot& m) {
  const ClientMetric::Label stream{"stream", m.stream};
  const ClientMetric::Label model{"model", m.model};
  const std::string entropy_help = "Entropy of the model's window, bits per symbol, by estimator.";
  out.Sample("codedrift_entropy_bits_per_symbol", entropy_help, kGauge,
             {stream, model, {"estimator", "plugin"}}, m.entropy_plugin);
  out.Sample("codedrift_entropy_bits_per_symbol", entropy_help, kGauge,
             {stream, model, {"estimator", "miller_madow"}}, m.entropy_mm);
  out.Sample("codedrift_entropy_stderr_bits_per_symbol",
             "Standard error of the plug-in entropy (i.i.d. delta method), bits per symbol.",
             kGauge, {stream, model}, m.entropy_stderr);
  const std::string mean_help =
      "Mean codeword length over the window, bits per symbol: the deployed code and a code "
      "retrained on the window.";
  out.Sample("codedrift_code_mean_bits_per_symbol", mean_help, kGauge,
             {stream, model, {"code", "deployed"}}, m.deployed_mean);
  out.Sample("codedrift_code_mean_bits_per_symbol", mean_help, kGauge,
             {stream, model, {"code", "retrained"}}, m.retrained_mean);
  out.Sample("codedrift_redundancy_bits_per_symbol",
             "Deployed mean length minus window entropy, bits per symbol.", kGauge, {stream, model},
             m.redundancy);
  out.Sample("codedrift_saving_ratio",
             "Fraction of coded bits a retrained code would save, estimated out of sample.", kGauge,
             {stream, model}, m.saving);
  out.Sample("codedrift_saving_lower_ratio",
             "Lower confidence bound of the saving ratio (from variation across buckets).", kGauge,
             {stream, model}, m.saving_lower);
  out.Sample("codedrift_payback_seconds",
             "Seconds of traffic until the saving pays for shipping the proposed table.", kGauge,
             {stream, model}, m.payback_seconds);
  out.Sample("codedrift_code_state", "Code state: 0 fit, 1 drifting, 2 stale.", kGauge,
             {stream, model}, static_cast<double>(m.state));
  out.Sample("codedrift_table_kraft_sum", "Kraft sum of the deployed code table.", kGauge,
             {stream, model}, m.kraft_sum);
  out.Sample("codedrift_window_symbols", "Symbols in the model's window now.", kGauge,
             {stream, model}, static_cast<double>(m.window_symbols));
  out.Sample("codedrift_symbols_total", "Symbols the model has counted.", kCounter, {stream, model},
             static_cast<double>(m.symbols_total));
  out.Sample("codedrift_unknown_symbols_total",
             "Symbols the deployed code does not cover (coded through the escape).", kCounter,
             {stream, model}, static_cast<double>(m.unknown_symbols_total));
  out.Sample("codedrift_alerts_total", "Alerts the model has raised.", kCounter, {stream, model},
             static_cast<double>(m.alerts_total));
  for (const auto& [symbol, count] : m.symbol_counts) {
    out.Sample("codedrift_window_symbol_count",
               "Count of each symbol in the model's window (export_counts: true), for fleet "
               "merges.",
               kGauge, {stream, model, {"symbol", symbol}}, static_cast<double>(count));
  }
}

}  // namespace

DaemonMetrics::DaemonMetrics(std::string_view version)
    : registry_(std::make_shared<prometheus::Registry>()),
      streams_(std::make_shared<const std::vector<StreamCountersEntry>>()),
      models_(std::make_shared<const std::vector<ModelMetricsSnapshot>>()),
      process_(std::make_shared<const std::vector<ProcessSample>>()) {
  // Buckets from 100 µs to 10 s: an evaluation is O(alphabet) and usually takes milliseconds.
  evaluation_seconds_ = &prometheus::BuildHistogram()
                             .Name("codedrift_evaluation_seconds")
                             .Help("Wall time of one evaluation pass over all models.")
                             .Register(*registry_)
                             .Add({}, prometheus::Histogram::BucketBoundaries{
                                          0.0001, 0.00025, 0.0005, 0.001, 0.0025, 0.005, 0.01,
                                          0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10});
  prometheus::BuildGauge()
      .Name("codedrift_build_info")
      .Help("Always 1; the label carries the daemon's version.")
      .Register(*registry_)
      .Add({{"version", std::string(version)}})
      .Set(1);
}

DaemonMetrics::~DaemonMetrics() = default;

void DaemonMetrics::SetStreams(std::vector<StreamCountersEntry> streams) {
  auto next = std::make_shared<const std::vector<StreamCountersEntry>>(std::move(streams));
  std::lock_guard<std::mutex> lock(mu_);
  streams_ = std::move(next);
}

void DaemonMetrics::UpdateModels(std::vector<ModelMetricsSnapshot> models) {
  auto next = std::make_shared<const std::vector<ModelMetricsSnapshot>>(std::move(models));
  std::lock_guard<std::mutex> lock(mu_);
  models_ = std::move(next);
}

void DaemonMetrics::UpdateProcess(std::vector<ProcessSample> samples) {
  auto next = std::make_shared<const std::vector<ProcessSample>>(std::move(samples));
  std::lock_guard<std::mutex> lock(mu_);
  process_ = std::move(next);
}

void DaemonMetrics::ObserveEvaluation(double seconds) { evaluation_seconds_->Observe(seconds); }

std::string DaemonMetrics::RenderMetrics() const {
  std::shared_ptr<const std::vector<StreamCountersEntry>> streams;
  std::shared_ptr<const std::vector<ModelMetricsSnapshot>> models;
  std::shared_ptr<const std::vector<ProcessSample>> process;
  {
    std::lock_guard<std::mutex> lock(mu_);
    streams = streams_;
    models = models_;
    process = process_;
  }
  FamilyBuilder builder;
  for (const ProcessSample& sample : *process) {
    std::vector<ClientMetric::Label> labels;
    for (const auto& [name, value] : sample.labels) labels.push_back({name, value});
    builder.Sample(sample.name, sample.help, sample.counter ? kCounter : kGauge, std::move(labels),
                   sample.value);
  }
  for (const StreamCountersEntry& entry : *streams) {
    if (entry.counters) AddStream(builder, entry);
  }
  for (const ModelMetricsSnapshot& model : *models) AddModel(builder, model);
  std::vector<MetricFamily> families = registry_->Collect();
  for (MetricFamily& family : builder.Take()) families.push_back(std::move(family));
  return prometheus::TextSerializer().Serialize(families);
}

}  // namespace codedrift
