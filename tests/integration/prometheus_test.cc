// The shipped dashboard and Prometheus rules against the real Prometheus (Debian package):
// promtool accepts every rules file and passes their unit tests; a Prometheus on loopback
// scrapes two real codedriftd fed the two halves of one capture; the fleet recording rules
// equal `codedrift inspect` on the whole capture; the stale-code alert fires on a drifting
// link; and every dashboard query returns data.
#include <algorithm>
#include <atomic>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <thread>

#include <gtest/gtest.h>

#include "dashboard_queries.h"
#include "harness.h"
#include "prometheus_server.h"

namespace codedrift::testing {
namespace {

namespace fs = std::filesystem;

const std::string kDashboards = std::string(CODEDRIFT_SOURCE_DIR) + "/dashboards";
const std::string kScenario =
    std::string(CODEDRIFT_SOURCE_DIR) + "/config/scenarios/orchard-probes.yaml";

std::vector<std::string> FilesEndingIn(const std::string& dir, const std::string& suffix) {
  std::vector<std::string> out;
  for (const auto& entry : fs::directory_iterator(dir)) {
    const std::string name = entry.path().filename().string();
    if (name.size() > suffix.size() && name.ends_with(suffix)) out.push_back(entry.path().string());
  }
  std::sort(out.begin(), out.end());
  return out;
}

std::string ReadText(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

TEST(PrometheusRules, PromtoolChecksEveryRulesFile) {
  const auto files = FilesEndingIn(kDashboards, ".rules.yml");
  ASSERT_GE(files.size(), 2u);
  for (const std::string& file : files) {
    const auto checked = RunCommand("promtool check rules " + file + " 2>&1");
    EXPECT_EQ(checked.exit_code, 0) << file << "\n" << checked.out;
    EXPECT_NE(checked.out.find("SUCCESS"), std::string::npos) << checked.out;
  }
}

// dashboards/tests/*.test.yml: promtool's rule unit tests, whose expected values come from
// textbooks (see the comments in each file).
TEST(PrometheusRules, PromtoolRuleUnitTestsPass) {
  const auto files = FilesEndingIn(kDashboards + "/tests", ".test.yml");
  ASSERT_GE(files.size(), 2u);
  for (const std::string& file : files) {
    const auto tested = RunCommand("promtool test rules " + file + " 2>&1");
    EXPECT_EQ(tested.exit_code, 0) << file << "\n" << tested.out;
  }
}

std::string DaemonConfig(const std::string& streams) {
  return "http: {listen: 127.0.0.1:0}\n"
         "state_dir: state\n"
         "evaluate_every: 200ms\n"
         "streams:\n" +
         streams;
}

// A link whose byte model exports its window counts; the window holds everything sent.
std::string LinkStream(const std::string& name) {
  return "  - name: " + name + R"(
    listen: tcp://127.0.0.1:0
    framing: lines
    models:
      - name: bytes
        symbols: {kind: bytes}
        window: {symbols: 1048576}
        table: probe.table
        export_counts: true
)";
}

// A link that will drift: a short window and an alert rule a test can reach in seconds.
constexpr char kDriftStream[] = R"(  - name: drift
    listen: tcp://127.0.0.1:0
    framing: lines
    models:
      - name: bytes
        symbols: {kind: bytes}
        window: {symbols: 60000, buckets: 16}
        table: probe.table
        alert: {saving: 2%, for: 2s, min_symbols: 30000, cooldown: 1s, max_payback: 1d}
)";

// Line-aligned halves of a capture: the first ends with the line that crosses the middle.
std::pair<std::string, std::string> SplitHalves(const std::string& capture) {
  const size_t cut = capture.find('\n', capture.size() / 2) + 1;
  return {capture.substr(0, cut), capture.substr(cut)};
}

// Sends `lines` round and round in small chunks, paced so the model sees traffic at every
// evaluation (its payback estimate needs a rate), until told to stop.
class TrafficLoop {
 public:
  TrafficLoop(uint16_t port, const std::string& capture) {
    std::vector<std::string> chunks;
    std::istringstream in(capture);
    std::string line, chunk;
    while (std::getline(in, line)) {
      chunk += line + "\n";
      if (chunk.size() >= 4096) {
        chunks.push_back(chunk);
        chunk.clear();
      }
    }
    thread_ = std::thread([this, port, chunks] {
      for (size_t i = 0; !stop_; i = (i + 1) % chunks.size()) {
        try {
          SendTcp(port, chunks[i]);
        } catch (const std::exception&) {
          return;  // the daemon went away; the test's own checks report it
        }
        std::this_thread::sleep_for(std::chrono::milliseconds(20));  // pacing, not a sync
      }
    });
  }
  ~TrafficLoop() { Stop(); }
  void Stop() {
    stop_ = true;
    if (thread_.joinable()) thread_.join();
  }

 private:
  std::atomic<bool> stop_{false};
  std::thread thread_;
};

bool HasAlert(const PrometheusServer& prometheus, const std::string& name, const std::string& label,
              const std::string& value, const std::string& state) {
  const nlohmann::json body = prometheus.Get("/api/v1/alerts");
  if (!body.is_object()) return false;
  for (const nlohmann::json& alert : body["data"]["alerts"]) {
    const nlohmann::json& labels = alert["labels"];
    if (labels.value("alertname", "") == name && labels.value(label, "") == value &&
        (state.empty() || alert.value("state", "") == state)) {
      return true;
    }
  }
  return false;
}

bool Near(double a, double b, double tolerance = 1e-6) { return std::abs(a - b) <= tolerance; }

TEST(PrometheusFleet, RealPrometheusScrapesTwoDaemonsAndEveryRuleAndPanelWorks) {
  TempDir dir;
  const std::string cli = CliPath();
  // Training traffic (phase 1, one seed), the capture split between the two links (phase 1,
  // another seed), and drifted traffic (phase 3) for the alert.
  const auto run = [&](const std::string& args) {
    const auto result = RunCommand(cli + " " + args + " 2>&1");
    EXPECT_EQ(result.exit_code, 0) << args << "\n" << result.out;
  };
  run("synth " + kScenario + " --seed 8 --phase spring-baseline --records 4000 --to " +
      dir.File("training.log"));
  run("synth " + kScenario + " --seed 7 --phase spring-baseline --records 4000 --to " +
      dir.File("capture.log"));
  run("synth " + kScenario + " --seed 9 --phase probe-firmware-3 --records 3000 --to " +
      dir.File("drift.log"));
  run("train --symbols bytes -o " + dir.File("probe.table") + " " + dir.File("training.log"));
  const std::string capture = ReadText(dir.File("capture.log"));
  const auto [first_half, second_half] = SplitHalves(capture);
  ASSERT_GT(second_half.size(), 100000u);

  TempDir dir_b;  // each daemon its own config dir and state
  fs::copy_file(dir.File("probe.table"), dir_b.File("probe.table"));
  DaemonProcess north(dir, DaemonConfig(LinkStream("north") + kDriftStream));
  DaemonProcess south(dir_b, DaemonConfig(LinkStream("south")));
  ASSERT_TRUE(north.WaitReady()) << north.Log();
  ASSERT_TRUE(south.WaitReady()) << south.Log();
  SendTcp(north.stream_port("north"), first_half);
  SendTcp(south.stream_port("south"), second_half);

  const std::string rule_glob = kDashboards + "/*.rules.yml";
  PrometheusServer prometheus(dir, R"(global:
  scrape_interval: 1s
  scrape_timeout: 1s
  evaluation_interval: 1s
rule_files: [")" + rule_glob + R"("]
scrape_configs:
  - job_name: codedrift-links
    static_configs:
      - targets: ["127.0.0.1:)" + std::to_string(north.http_port()) +
                                       R"(", "127.0.0.1:)" + std::to_string(south.http_port()) +
                                       R"("]
)");
  ASSERT_TRUE(prometheus.WaitReady()) << prometheus.Log();

  // The fleet merge: once both windows are in, the recording rules hold the whole capture.
  const std::string fleet = R"({job="codedrift-links",model="bytes"})";
  ASSERT_TRUE(WaitFor(
      [&] {
        return prometheus.Scalar("codedrift:fleet_symbols" + fleet) ==
               static_cast<double>(capture.size());
      },
      std::chrono::seconds(90)))
      << prometheus.Query("codedrift:fleet_symbols").dump() << prometheus.Log();
  // codedrift inspect on the union of both windows (bytes: the concatenation).
  const auto inspected = RunCommand(cli + " inspect --json --table " + dir.File("probe.table") +
                                    " " + dir.File("capture.log"));
  ASSERT_EQ(inspected.exit_code, 0) << inspected.out;
  const auto expected = nlohmann::json::parse(inspected.out);
  const auto fleet_figure = [&](const std::string& name, const std::string& labels = "") {
    return prometheus.Scalar(name + R"({job="codedrift-links",model="bytes")" + labels + "}");
  };
  EXPECT_EQ(fleet_figure("codedrift:fleet_members"), 2.0);
  EXPECT_EQ(fleet_figure("codedrift:fleet_distinct_symbols"), expected["distinct"].get<double>());
  const double entropy =
      fleet_figure("codedrift:fleet_entropy_bits_per_symbol", R"(,estimator="plugin")");
  EXPECT_TRUE(Near(entropy, expected["entropy_bits"])) << entropy << " vs " << expected.dump();
  EXPECT_TRUE(
      Near(fleet_figure("codedrift:fleet_entropy_bits_per_symbol", R"(,estimator="miller_madow")"),
           expected["entropy_mm_bits"]));
  EXPECT_TRUE(Near(fleet_figure("codedrift:fleet_entropy_stderr_bits_per_symbol"),
                   expected["entropy_stderr_bits"]));
  EXPECT_EQ(fleet_figure("codedrift:fleet_fixed_length_bits_per_symbol"),
            expected["fixed_length_bits"].get<double>());
  const double deployed = fleet_figure("codedrift:fleet_code_mean_bits_per_symbol");
  EXPECT_TRUE(Near(deployed, expected["deployed_mean_bits"])) << deployed;
  EXPECT_TRUE(Near(fleet_figure("codedrift:fleet_redundancy_bits_per_symbol"),
                   expected["redundancy_bits"]));
  EXPECT_TRUE(Near(
      fleet_figure("codedrift:fleet_saving_ideal_ratio"),
      1.0 - expected["entropy_bits"].get<double>() / expected["deployed_mean_bits"].get<double>()));

  // Every recording and alerting rule evaluates without an error.
  ASSERT_TRUE(WaitFor([&] {
    const nlohmann::json body = prometheus.Get("/api/v1/rules");
    if (!body.is_object()) return false;
    for (const auto& group : body["data"]["groups"]) {
      for (const auto& rule : group["rules"]) {
        if (rule.value("health", "") == "unknown") return false;
      }
    }
    return true;
  }));
  size_t rules = 0;
  const nlohmann::json rule_list = prometheus.Get("/api/v1/rules");
  for (const auto& group : rule_list["data"]["groups"]) {
    for (const auto& rule : group["rules"]) {
      ++rules;
      EXPECT_EQ(rule.value("health", ""), "ok") << rule.dump();
    }
  }
  EXPECT_GE(rules, 10u);

  // Drift: phase-3 traffic against the phase-1 table until the stale alert fires.
  TrafficLoop drift(north.stream_port("drift"), ReadText(dir.File("drift.log")));
  EXPECT_TRUE(WaitFor(
      [&] { return HasAlert(prometheus, "CodedriftCodeStale", "stream", "drift", "firing"); },
      std::chrono::seconds(90)))
      << prometheus.Get("/api/v1/alerts").dump() << north.ModelJson("drift", "bytes").dump();
  EXPECT_FALSE(HasAlert(prometheus, "CodedriftCodeStale", "stream", "north", ""));
  EXPECT_FALSE(HasAlert(prometheus, "CodedriftCodeStale", "stream", "south", ""));

  // Every dashboard query returns data, and its template variables list what is there.
  const auto dashboard = nlohmann::json::parse(ReadText(kDashboards + "/codedrift-dashboard.json"));
  const std::map<std::string, std::string> values = {
      {"stream", "drift"}, {"model", "bytes"}, {"__rate_interval", "10s"}, {"__interval", "2s"}};
  const auto queries = PanelQueries(dashboard, values);
  EXPECT_GE(queries.size(), 20u);
  for (const PanelQuery& query : queries) {
    EXPECT_EQ(query.expr.find('$'), std::string::npos) << query.panel << ": " << query.expr;
    EXPECT_EQ(prometheus.QueryError(query.expr), "") << query.panel << ": " << query.expr;
    EXPECT_TRUE(
        WaitFor([&] { return !prometheus.Query(query.expr).empty(); }, std::chrono::seconds(10)))
        << query.panel << ": no data for " << query.expr;
  }
  for (const auto& variable : VariableQueries(dashboard, values)) {
    ASSERT_FALSE(variable.label.empty()) << variable.variable << " is not label_values(...)";
    const auto answer = prometheus.Get("/api/v1/label/" + variable.label +
                                       "/values?match[]=" + UrlEncode(variable.selector));
    ASSERT_TRUE(answer.is_object()) << variable.selector;
    const auto& listed = answer["data"];
    EXPECT_NE(std::find(listed.begin(), listed.end(), values.at(variable.variable)), listed.end())
        << variable.variable << ": " << listed.dump();
  }
  drift.Stop();

  // A member that goes away leaves the merge and raises the gone-daemon alert (pending for
  // its 5 minutes).
  EXPECT_EQ(south.Stop(), 0) << south.Log();
  const std::string south_instance = "127.0.0.1:" + std::to_string(south.http_port());
  EXPECT_TRUE(WaitFor([&] { return fleet_figure("codedrift:fleet_members") == 1.0; },
                      std::chrono::seconds(30)));
  EXPECT_TRUE(WaitFor(
      [&] {
        return HasAlert(prometheus, "CodedriftDaemonGone", "instance", south_instance, "pending");
      },
      std::chrono::seconds(30)))
      << prometheus.Get("/api/v1/alerts").dump();

  EXPECT_EQ(prometheus.Stop(), 0) << prometheus.Log();
  EXPECT_EQ(north.Stop(), 0) << north.Log();
}

}  // namespace
}  // namespace codedrift::testing
