// Alerts end to end: the real daemon watching synthesized orchard traffic goes fit -> drifting
// -> stale after a firmware rollout, delivers exactly one webhook to a real receiver, and
// writes a proposal that keeps its promise on fresh traffic; stationary traffic never alerts.
#include <atomic>
#include <cmath>
#include <csignal>
#include <filesystem>
#include <thread>

#include <gtest/gtest.h>

#include "../unit/webhook_receiver.h"
#include "harness.h"

namespace codedrift::testing {
namespace {

const std::string kScenario =
    std::string(CODEDRIFT_SOURCE_DIR) + "/config/scenarios/orchard-probes.yaml";

std::string Synth(const std::string& phase, int seed) {
  const auto out = RunCommand(CliPath() + " synth " + kScenario + " --phase " + phase + " --seed " +
                              std::to_string(seed));
  EXPECT_EQ(out.exit_code, 0);
  return out.out;
}

std::string Config(uint16_t webhook_port, const std::string& alert) {
  return "http: {listen: 127.0.0.1:0}\n"
         "state_dir: state\n"
         "evaluate_every: 100ms\n"
         "streams:\n"
         "  - name: radio\n"
         "    listen: tcp://127.0.0.1:0\n"
         "    models:\n"
         "      - name: bytes\n"
         "        symbols: {kind: bytes}\n"
         "        window: {symbols: 400000}\n"
         "        table: deployed.table\n"
         "        alert: " +
         alert +
         "\n"
         "alerts:\n"
         "  log: true\n"
         "  webhook: {url: \"http://127.0.0.1:" +
         std::to_string(webhook_port) + "/hook\", timeout: 2s, retries: 3}\n";
}

void TrainDeployedTable(const TempDir& dir) {
  dir.Write("baseline.log", Synth("spring-baseline", 1));
  const auto trained = RunCommand(CliPath() + " train --symbols bytes -o " +
                                  dir.File("deployed.table") + " " + dir.File("baseline.log"));
  ASSERT_EQ(trained.exit_code, 0) << trained.out;
}

double JsonNumber(const nlohmann::json& doc, const char* key) {
  return doc.at(key).is_number() ? doc.at(key).get<double>() : std::nan("");
}

TEST(Alerts, FirmwareRolloutGoesStaleOnceWithAProposalThatKeepsItsPromise) {
  TempDir dir;
  TrainDeployedTable(dir);
  webhook_test::Receiver receiver;
  DaemonProcess daemon(
      dir, Config(receiver.port(),
                  "{saving: 5%, for: 1s, min_symbols: 100000, confidence: 0.95, cooldown: 1h, "
                  "max_payback: 1d}"));
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  const uint16_t port = daemon.stream_port("radio");

  // Stationary traffic from the training regime (another seed): the model stays fit.
  const std::string stationary = Synth("spring-baseline", 2);
  SendTcp(port, stationary);
  nlohmann::json model;
  ASSERT_TRUE(WaitFor([&] {
    model = daemon.ModelJson("radio", "bytes");
    return model.is_object() && model.value("symbols_total", 0u) == stationary.size();
  })) << daemon.Log();
  EXPECT_EQ(model["state"], "fit") << model["reason"];

  // The rollout: firmware-3 traffic keeps flowing until the model goes stale.
  const std::string shifted = Synth("probe-firmware-3", 3);
  std::atomic<bool> stop{false};
  std::thread sender([&] {
    while (!stop) SendTcp(port, shifted.substr(0, 200000));
  });
  const bool stale = WaitFor(
      [&] {
        model = daemon.ModelJson("radio", "bytes");
        return model.is_object() && model["state"] == "stale";
      },
      std::chrono::seconds(60));
  stop = true;
  sender.join();
  ASSERT_TRUE(stale) << model.dump(1) << daemon.Log();
  EXPECT_EQ(model["alerts_total"], 1);
  EXPECT_NE(model["reason"].get<std::string>().find("retrained code would save"),
            std::string::npos);

  // fit -> drifting -> stale, stale entered `for` (1 s) after drifting, give or take two
  // evaluation intervals (0.1 s each) and scheduling slack.
  const auto history = daemon.ModelJson("radio", "bytes")["history"];
  double drifting_at = -1, stale_at = -1;
  for (const auto& point : history) {
    if (point["state"] == "drifting" && drifting_at < 0) drifting_at = point["time"];
    if (point["state"] == "stale" && stale_at < 0) stale_at = point["time"];
  }
  ASSERT_GT(drifting_at, 0) << history.dump();
  ASSERT_GT(stale_at, drifting_at);
  EXPECT_GE(stale_at - drifting_at, 1.0 - 1e-3);
  EXPECT_LE(stale_at - drifting_at, 1.0 + 0.2 + 0.5);

  // Exactly one webhook delivery, carrying the proposal's checksum.
  ASSERT_TRUE(receiver.WaitForRequests(1)) << daemon.Log();
  ASSERT_TRUE(WaitFor([&] {
    return daemon.Metric("codedrift_webhook_deliveries_total", {"result=\"delivered\""}) == 1.0;
  }));
  const auto received = receiver.received();
  ASSERT_EQ(received.size(), 1u);
  const auto notice = nlohmann::json::parse(received[0].body);
  EXPECT_EQ(notice["stream"], "radio");
  EXPECT_EQ(notice["state"], "stale");
  EXPECT_EQ(notice["proposal"]["url"], "/api/v1/models/radio/bytes/proposal");
  const double promised_lower = JsonNumber(notice["figures"], "saving_lower_ratio");
  ASSERT_GT(promised_lower, 0.05);

  // The proposal validates and, on fresh traffic of the new regime, saves at least the lower
  // bound the alert promised.
  const HttpReply proposal =
      HttpCall(daemon.http_port(), "GET", "/api/v1/models/radio/bytes/proposal");
  ASSERT_EQ(proposal.status, 200);
  EXPECT_NE(proposal.body.find(notice["proposal"]["checksum"].get<std::string>()),
            std::string::npos);
  dir.Write("proposal.table", proposal.body);
  EXPECT_EQ(RunCommand(CliPath() + " check " + dir.File("proposal.table")).exit_code, 0);
  dir.Write("fresh.log", Synth("probe-firmware-3", 4));
  const auto with_proposal =
      nlohmann::json::parse(RunCommand(CliPath() + " inspect --json --table " +
                                       dir.File("proposal.table") + " " + dir.File("fresh.log"))
                                .out);
  const auto with_deployed =
      nlohmann::json::parse(RunCommand(CliPath() + " inspect --json --table " +
                                       dir.File("deployed.table") + " " + dir.File("fresh.log"))
                                .out);
  const double saving = 1.0 - with_proposal["deployed_mean_bits"].get<double>() /
                                  with_deployed["deployed_mean_bits"].get<double>();
  EXPECT_GE(saving, promised_lower) << "promised " << promised_lower;

  // Deploying the proposal (replace the table, reload) returns the model to fit.
  dir.Write("deployed.table", proposal.body);
  daemon.Signal(SIGHUP);
  EXPECT_TRUE(WaitFor([&] {
    model = daemon.ModelJson("radio", "bytes");
    return model.is_object() && model["state"] == "fit";
  })) << model.dump(1);
  EXPECT_EQ(receiver.received().size(), 1u);
  EXPECT_EQ(daemon.Stop(), 0);
}

// The state dir below a regular file (ENOTDIR; chmod would not stop root in CI): the alert
// still fires, the failed proposal is logged, counted and retried, and once the state dir can
// be created the retry writes it.
TEST(Alerts, UnwritableStateDirIsCountedAndRetried) {
  TempDir dir;
  TrainDeployedTable(dir);
  dir.Write("blocker", "a file where the state dir should be\n");
  webhook_test::Receiver receiver;
  std::string config = Config(receiver.port(),
                              "{saving: 5%, for: 0s, min_symbols: 100000, cooldown: 1h, "
                              "max_payback: 1d}");
  config.replace(config.find("state_dir: state"), 16, "state_dir: blocker/state");
  DaemonProcess daemon(dir, config);
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  const uint16_t port = daemon.stream_port("radio");
  SendTcp(port, Synth("spring-baseline", 2));
  const std::string shifted = Synth("probe-firmware-3", 3);
  std::atomic<bool> stop{false};
  std::thread sender([&] {
    while (!stop) SendTcp(port, shifted.substr(0, 200000));
  });
  const bool failed =
      WaitFor([&] { return daemon.Metric("codedrift_proposal_failures_total").value_or(0) >= 2.0; },
              std::chrono::seconds(60));
  ASSERT_TRUE(failed) << daemon.Log();
  EXPECT_NE(daemon.Log().find("proposal not written"), std::string::npos);
  EXPECT_EQ(HttpCall(daemon.http_port(), "GET", "/api/v1/models/radio/bytes/proposal").status, 404);
  ASSERT_TRUE(receiver.WaitForRequests(1));
  EXPECT_TRUE(nlohmann::json::parse(receiver.received()[0].body)["proposal"].is_null());

  // Make the state dir creatable: the next retry writes the proposal.
  std::filesystem::remove(dir.File("blocker"));
  std::filesystem::create_directory(dir.File("blocker"));
  const bool written = WaitFor([&] {
    return HttpCall(daemon.http_port(), "GET", "/api/v1/models/radio/bytes/proposal").status == 200;
  });
  stop = true;
  sender.join();
  EXPECT_TRUE(written) << daemon.Log();
  EXPECT_EQ(daemon.Stop(), 0);
}

TEST(Alerts, StationaryTrafficNeverLeavesFit) {
  TempDir dir;
  TrainDeployedTable(dir);
  webhook_test::Receiver receiver;
  DaemonProcess daemon(dir, Config(receiver.port(), "{}"));  // the default alert rule
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  const uint16_t port = daemon.stream_port("radio");
  uint64_t sent = 0;
  int evaluations_seen = 0;
  for (int seed = 10; sent < 10'000'000; ++seed) {
    const std::string traffic = Synth("spring-baseline", seed);
    for (size_t at = 0; at < traffic.size(); at += 250'000) {
      const std::string chunk = traffic.substr(at, 250'000);
      SendTcp(port, chunk);
      sent += chunk.size();
      nlohmann::json model;
      ASSERT_TRUE(WaitFor([&] {
        model = daemon.ModelJson("radio", "bytes");
        return model.is_object() && model.value("symbols_total", 0u) == sent;
      })) << daemon.Log();
      ++evaluations_seen;
      ASSERT_EQ(model["state"], "fit") << "after " << sent << " bytes: " << model["reason"];
    }
  }
  EXPECT_GE(evaluations_seen, 40);
  const auto history = daemon.ModelJson("radio", "bytes")["history"];
  for (const auto& point : history) EXPECT_EQ(point["state"], "fit");
  EXPECT_EQ(daemon.Metric("codedrift_alerts_total", {"model=\"bytes\""}), 0.0);
  EXPECT_TRUE(receiver.received().empty());
  EXPECT_EQ(daemon.Stop(), 0);
}

}  // namespace
}  // namespace codedrift::testing
