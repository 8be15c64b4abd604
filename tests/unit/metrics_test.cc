// DaemonMetrics: the exposition carries exactly the names and labels of DESIGN.md §5 and
// passes `promtool check metrics` (the Prometheus project's own linter, Debian package
// `prometheus`).
#include "metrics.h"

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <limits>
#include <map>
#include <optional>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include <sys/wait.h>

namespace codedrift {
namespace {

using Labels = std::map<std::string, std::string>;

struct Sample {
  std::string name;
  Labels labels;
  std::string value;
};

// A small reader of the text format 0.0.4 (prometheus.io "Exposition formats", from memory):
// `name{k="v",...} value`, label values with \\, \" and \n escapes.
std::vector<Sample> ParseSamples(const std::string& text) {
  std::vector<Sample> out;
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line)) {
    if (line.empty() || line[0] == '#') continue;
    Sample sample;
    size_t i = 0;
    while (i < line.size() && line[i] != '{' && line[i] != ' ') sample.name += line[i++];
    if (i < line.size() && line[i] == '{') {
      ++i;
      while (i < line.size() && line[i] != '}') {
        std::string key;
        while (line[i] != '=') key += line[i++];
        i += 2;  // ="
        std::string value;
        while (line[i] != '"') {
          if (line[i] == '\\') {
            ++i;
            value += line[i] == 'n' ? '\n' : line[i];
          } else {
            value += line[i];
          }
          ++i;
        }
        ++i;  // closing quote
        if (line[i] == ',') ++i;
        sample.labels[key] = value;
      }
      ++i;  // }
    }
    sample.value = line.substr(i + 1);
    out.push_back(std::move(sample));
  }
  return out;
}

std::optional<double> Find(const std::vector<Sample>& samples, const std::string& name,
                           const Labels& labels) {
  for (const Sample& s : samples) {
    if (s.name == name && s.labels == labels) return std::stod(s.value);
  }
  return std::nullopt;
}

bool HasName(const std::vector<Sample>& samples, const std::string& name) {
  for (const Sample& s : samples) {
    if (s.name == name) return true;
  }
  return false;
}

std::string TypeOf(const std::string& text, const std::string& name) {
  const std::string prefix = "# TYPE " + name + " ";
  const size_t at = text.find(prefix);
  if (at == std::string::npos) return "";
  return text.substr(at + prefix.size(), text.find('\n', at) - at - prefix.size());
}

ModelMetricsSnapshot FullModel() {
  ModelMetricsSnapshot m;
  m.stream = "uplink";
  m.model = "bytes";
  m.entropy_plugin = 4.25;
  m.entropy_mm = 4.5;
  m.entropy_stderr = 0.125;
  m.deployed_mean = 5.0;
  m.retrained_mean = 4.375;
  m.redundancy = 0.75;
  m.saving = 0.125;
  m.saving_lower = 0.0625;
  m.payback_seconds = 30.0;
  m.state = 2;
  m.kraft_sum = 1.0;
  m.window_symbols = 1000;
  m.symbols_total = 5000;
  m.unknown_symbols_total = 7;
  m.alerts_total = 3;
  return m;
}

struct Lint {
  int exit_code;
  std::string output;
};

// Runs `promtool check metrics` on the exposition and returns its exit code and output.
Lint RunPromtool(const std::string& exposition) {
  const std::filesystem::path file =
      std::filesystem::temp_directory_path() /
      ("codedrift_metrics_test_" + std::to_string(::getpid()) + ".prom");
  std::ofstream(file) << exposition;
  const std::string command = "promtool check metrics < " + file.string() + " 2>&1";
  FILE* pipe = ::popen(command.c_str(), "r");
  EXPECT_NE(pipe, nullptr);
  std::string output;
  char buffer[4096];
  size_t n;
  while (pipe != nullptr && (n = std::fread(buffer, 1, sizeof buffer, pipe)) > 0) {
    output.append(buffer, n);
  }
  const int status = pipe == nullptr ? -1 : ::pclose(pipe);
  std::filesystem::remove(file);
  return {WIFEXITED(status) ? WEXITSTATUS(status) : -1, output};
}

TEST(DaemonMetrics, ModelSamplesCarryDesignNamesAndLabels) {
  DaemonMetrics metrics("1.2.3");
  metrics.UpdateModels({FullModel()});
  const std::string text = metrics.RenderMetrics();
  const auto samples = ParseSamples(text);
  const Labels base{{"stream", "uplink"}, {"model", "bytes"}};
  auto with = [&](const std::string& key, const std::string& value) {
    Labels labels = base;
    labels[key] = value;
    return labels;
  };
  // Names, labels and meanings: DESIGN.md §5 "Metrics".
  EXPECT_EQ(Find(samples, "codedrift_entropy_bits_per_symbol", with("estimator", "plugin")), 4.25);
  EXPECT_EQ(Find(samples, "codedrift_entropy_bits_per_symbol", with("estimator", "miller_madow")),
            4.5);
  EXPECT_EQ(Find(samples, "codedrift_entropy_stderr_bits_per_symbol", base), 0.125);
  EXPECT_EQ(Find(samples, "codedrift_code_mean_bits_per_symbol", with("code", "deployed")), 5.0);
  EXPECT_EQ(Find(samples, "codedrift_code_mean_bits_per_symbol", with("code", "retrained")), 4.375);
  EXPECT_EQ(Find(samples, "codedrift_redundancy_bits_per_symbol", base), 0.75);
  EXPECT_EQ(Find(samples, "codedrift_saving_ratio", base), 0.125);
  EXPECT_EQ(Find(samples, "codedrift_saving_lower_ratio", base), 0.0625);
  EXPECT_EQ(Find(samples, "codedrift_payback_seconds", base), 30.0);
  EXPECT_EQ(Find(samples, "codedrift_code_state", base), 2.0);
  EXPECT_EQ(Find(samples, "codedrift_table_kraft_sum", base), 1.0);
  EXPECT_EQ(Find(samples, "codedrift_window_symbols", base), 1000.0);
  EXPECT_EQ(Find(samples, "codedrift_symbols_total", base), 5000.0);
  EXPECT_EQ(Find(samples, "codedrift_unknown_symbols_total", base), 7.0);
  EXPECT_EQ(Find(samples, "codedrift_alerts_total", base), 3.0);
  EXPECT_EQ(Find(samples, "codedrift_build_info", {{"version", "1.2.3"}}), 1.0);
  // Without export_counts no per-symbol series appear.
  EXPECT_FALSE(HasName(samples, "codedrift_window_symbol_count"));

  // Types: *_total are counters, the rest gauges (Prometheus naming practice, from memory).
  for (const char* counter :
       {"codedrift_symbols_total", "codedrift_unknown_symbols_total", "codedrift_alerts_total"}) {
    EXPECT_EQ(TypeOf(text, counter), "counter") << counter;
  }
  for (const char* gauge :
       {"codedrift_entropy_bits_per_symbol", "codedrift_code_state", "codedrift_window_symbols",
        "codedrift_table_kraft_sum", "codedrift_build_info"}) {
    EXPECT_EQ(TypeOf(text, gauge), "gauge") << gauge;
  }
}

TEST(DaemonMetrics, AbsentFiguresLeaveTheirSamplesOut) {
  DaemonMetrics metrics("1.2.3");
  ModelMetricsSnapshot m = FullModel();
  m.deployed_mean.reset();
  m.redundancy.reset();
  m.saving.reset();
  m.saving_lower.reset();
  m.payback_seconds.reset();
  m.kraft_sum = std::numeric_limits<double>::quiet_NaN();  // no table
  metrics.UpdateModels({m});
  const auto samples = ParseSamples(metrics.RenderMetrics());
  const Labels base{{"stream", "uplink"}, {"model", "bytes"}};
  EXPECT_FALSE(Find(samples, "codedrift_code_mean_bits_per_symbol",
                    {{"stream", "uplink"}, {"model", "bytes"}, {"code", "deployed"}}));
  EXPECT_TRUE(Find(samples, "codedrift_code_mean_bits_per_symbol",
                   {{"stream", "uplink"}, {"model", "bytes"}, {"code", "retrained"}}));
  for (const char* name :
       {"codedrift_redundancy_bits_per_symbol", "codedrift_saving_ratio",
        "codedrift_saving_lower_ratio", "codedrift_payback_seconds", "codedrift_table_kraft_sum"}) {
    EXPECT_FALSE(HasName(samples, name)) << name;
  }
  EXPECT_EQ(Find(samples, "codedrift_window_symbols", base), 1000.0);
}

TEST(DaemonMetrics, UpdateModelsReplacesTheWholeSet) {
  DaemonMetrics metrics("1.2.3");
  ModelMetricsSnapshot other = FullModel();
  other.model = "tokens";
  metrics.UpdateModels({FullModel(), other});
  metrics.UpdateModels({other});
  const auto samples = ParseSamples(metrics.RenderMetrics());
  EXPECT_FALSE(
      Find(samples, "codedrift_window_symbols", {{"stream", "uplink"}, {"model", "bytes"}}));
  EXPECT_TRUE(
      Find(samples, "codedrift_window_symbols", {{"stream", "uplink"}, {"model", "tokens"}}));
}

TEST(DaemonMetrics, StreamCountersAreReadAtScrapeTime) {
  DaemonMetrics metrics("1.2.3");
  auto counters = std::make_shared<StreamCounters>();
  metrics.SetStreams({{"uplink", counters}});
  counters->records_total = 10;
  counters->bytes_total = 640;
  counters->connections = 2;
  counters->Add(RecordRejectReason::kOversizedFrame);
  counters->Add(ConnectionRejectReason::kTooMany);
  counters->Add(ConnectionRejectReason::kTooMany);
  counters->Add(ConnectionCloseReason::kIdle);
  std::string text = metrics.RenderMetrics();
  auto samples = ParseSamples(text);
  const Labels stream{{"stream", "uplink"}};
  auto reason = [](const std::string& r) { return Labels{{"stream", "uplink"}, {"reason", r}}; };
  // Names and reason labels: DESIGN.md §5 "Per stream"; connections_closed_total is our addition.
  EXPECT_EQ(Find(samples, "codedrift_records_total", stream), 10.0);
  EXPECT_EQ(Find(samples, "codedrift_bytes_total", stream), 640.0);
  EXPECT_EQ(Find(samples, "codedrift_connections", stream), 2.0);
  EXPECT_EQ(Find(samples, "codedrift_records_rejected_total", reason("oversized_frame")), 1.0);
  EXPECT_EQ(Find(samples, "codedrift_records_rejected_total", reason("overlong")), 0.0);
  EXPECT_EQ(Find(samples, "codedrift_records_rejected_total", reason("truncated_frame")), 0.0);
  EXPECT_EQ(Find(samples, "codedrift_records_rejected_total", reason("oversized_datagram")), 0.0);
  EXPECT_EQ(Find(samples, "codedrift_connections_rejected_total", reason("too_many")), 2.0);
  EXPECT_EQ(Find(samples, "codedrift_connections_rejected_total", reason("not_allowed")), 0.0);
  EXPECT_EQ(Find(samples, "codedrift_connections_closed_total", reason("idle")), 1.0);
  EXPECT_EQ(TypeOf(text, "codedrift_records_total"), "counter");
  EXPECT_EQ(TypeOf(text, "codedrift_connections"), "gauge");

  counters->records_total += 5;
  samples = ParseSamples(metrics.RenderMetrics());
  EXPECT_EQ(Find(samples, "codedrift_records_total", stream), 15.0);
}

TEST(DaemonMetrics, EvaluationHistogramCountsObservationsIntoBuckets) {
  DaemonMetrics metrics("1.2.3");
  metrics.ObserveEvaluation(0.003);
  metrics.ObserveEvaluation(0.2);
  const std::string text = metrics.RenderMetrics();
  const auto samples = ParseSamples(text);
  EXPECT_EQ(TypeOf(text, "codedrift_evaluation_seconds"), "histogram");
  EXPECT_EQ(Find(samples, "codedrift_evaluation_seconds_count", {}), 2.0);
  EXPECT_NEAR(*Find(samples, "codedrift_evaluation_seconds_sum", {}), 0.203, 1e-12);
  // Cumulative buckets (le = upper bound inclusive), Prometheus histogram semantics (from memory).
  EXPECT_EQ(Find(samples, "codedrift_evaluation_seconds_bucket", {{"le", "0.0025"}}), 0.0);
  EXPECT_EQ(Find(samples, "codedrift_evaluation_seconds_bucket", {{"le", "0.005"}}), 1.0);
  EXPECT_EQ(Find(samples, "codedrift_evaluation_seconds_bucket", {{"le", "0.25"}}), 2.0);
  EXPECT_EQ(Find(samples, "codedrift_evaluation_seconds_bucket", {{"le", "+Inf"}}), 2.0);
}

TEST(DaemonMetrics, SymbolCountsAreExportedWithEscapedLabels) {
  DaemonMetrics metrics("1.2.3");
  ModelMetricsSnapshot m = FullModel();
  m.symbol_counts = {{"0x41", 12}, {"say \"hi\"\\", 3}};
  metrics.UpdateModels({m});
  const auto samples = ParseSamples(metrics.RenderMetrics());
  EXPECT_EQ(Find(samples, "codedrift_window_symbol_count",
                 {{"stream", "uplink"}, {"model", "bytes"}, {"symbol", "0x41"}}),
            12.0);
  EXPECT_EQ(Find(samples, "codedrift_window_symbol_count",
                 {{"stream", "uplink"}, {"model", "bytes"}, {"symbol", "say \"hi\"\\"}}),
            3.0);
}

// promlint (inside promtool 2.42) flags a few names that DESIGN.md §5 fixes as a contract: it
// wants "bytes" rather than "bits" as the unit and reserves the _sum and _count suffixes for
// histograms and summaries. Those findings, and only those, are expected; anything else (a
// parse error, a missing HELP, a counter without _total) fails the test.
const std::set<std::string> kContractNameFindings = {
    "codedrift_code_mean_bits_per_symbol use base unit \"bytes\" instead of \"bits\"",
    "codedrift_entropy_bits_per_symbol use base unit \"bytes\" instead of \"bits\"",
    "codedrift_entropy_stderr_bits_per_symbol use base unit \"bytes\" instead of \"bits\"",
    "codedrift_redundancy_bits_per_symbol use base unit \"bytes\" instead of \"bits\"",
    "codedrift_table_kraft_sum non-histogram and non-summary metrics should not have \"_sum\" "
    "suffix",
    "codedrift_window_symbol_count non-histogram and non-summary metrics should not have "
    "\"_count\" suffix",
};

std::set<std::string> Lines(const std::string& text) {
  std::set<std::string> out;
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line)) {
    if (!line.empty()) out.insert(line);
  }
  return out;
}

TEST(DaemonMetrics, ExpositionWithoutContractNamesPassesPromtoolCleanly) {
  // Stream counters and process metrics alone: every name is ours to choose, so lint is empty.
  DaemonMetrics metrics("0.1.0");
  auto counters = std::make_shared<StreamCounters>();
  counters->records_total = 3;
  metrics.SetStreams({{"uplink", counters}, {"packets", std::make_shared<StreamCounters>()}});
  metrics.ObserveEvaluation(0.01);
  const Lint lint = RunPromtool(metrics.RenderMetrics());
  EXPECT_EQ(lint.exit_code, 0) << lint.output;
  EXPECT_EQ(lint.output, "");
}

TEST(DaemonMetrics, FullExpositionParsesAndLintsOnlyContractNames) {
  DaemonMetrics metrics("0.1.0");
  metrics.SetStreams({{"uplink", std::make_shared<StreamCounters>()}});
  ModelMetricsSnapshot bytes = FullModel();
  bytes.symbol_counts = {{"0x41", 4}, {"0x0a", 1}};
  ModelMetricsSnapshot tokens = FullModel();
  tokens.model = "tokens";
  tokens.kraft_sum = std::numeric_limits<double>::quiet_NaN();
  metrics.UpdateModels({bytes, tokens});
  metrics.ObserveEvaluation(0.01);
  const Lint lint = RunPromtool(metrics.RenderMetrics());
  // Exit code 3 is promtool's "lint problems" code; a parse error would also print other text.
  EXPECT_EQ(lint.exit_code, 3) << lint.output;
  EXPECT_EQ(Lines(lint.output), kContractNameFindings) << lint.output;
}

}  // namespace
}  // namespace codedrift
