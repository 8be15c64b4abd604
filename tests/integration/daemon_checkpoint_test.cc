// Checkpoints with the real daemon: after kill -9 a restart resumes from the last checkpoint
// (window, totals, history), damaged or foreign checkpoints are set aside without stopping the
// daemon, and an unwritable state_dir is counted and logged while the daemon keeps running.
#include <atomic>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <thread>

#include <gtest/gtest.h>

#include "codedrift/checkpoint.h"

#include "harness.h"
#include <sys/stat.h>

namespace codedrift::testing {
namespace {

namespace fs = std::filesystem;

constexpr uint64_t kWindow = 5000;

std::string Config(const std::string& state_dir = "state", uint64_t window = kWindow) {
  return "http: {listen: 127.0.0.1:0}\n"
         "state_dir: " +
         state_dir +
         "\n"
         "evaluate_every: 100ms\n"
         "checkpoint_every: 1s\n"
         "streams:\n"
         "  - name: uplink\n"
         "    listen: tcp://127.0.0.1:0\n"
         "    models:\n"
         "      - name: bytes\n"
         "        symbols: {kind: bytes}\n"
         "        window: {symbols: " +
         std::to_string(window) +
         "}\n"
         "        table: probe.table\n"
         "        export_counts: true\n"
         "      - name: tokens\n"
         "        symbols: {kind: tokens}\n"
         "        window: {span: 1h, buckets: 6}\n";
}

std::string ReadFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

std::string CheckpointPath(const TempDir& dir, const std::string& model) {
  return dir.File("state/checkpoints/uplink/" + model + ".ckpt");
}

std::string Identity(const std::string& model, uint64_t window = kWindow) {
  if (model == "bytes") return ModelIdentity("uplink", "bytes", {}, {.symbols = window});
  SymbolizerSpec tokens;
  tokens.kind = AlphabetKind::kTokens;
  return ModelIdentity("uplink", "tokens", tokens, {.span = std::chrono::hours(1), .buckets = 6});
}

uint64_t WindowTotal(const WindowState& window) {
  uint64_t total = window.bytes.size() + window.ids.size();
  for (const auto& bucket : window.buckets) {
    for (uint64_t c : bucket) total += c;
  }
  return total;
}

void TrainTable(const TempDir& dir) {
  dir.Write("training.log", ProbeLines(1, 2000));
  const auto trained = RunCommand(CliPath() + " train --symbols bytes -o " +
                                  dir.File("probe.table") + " " + dir.File("training.log"));
  ASSERT_EQ(trained.exit_code, 0) << trained.out;
}

// Waits for the first evaluation after a start and returns the model's JSON.
nlohmann::json Evaluated(const DaemonProcess& daemon, const std::string& model) {
  nlohmann::json json;
  WaitFor([&] {
    json = daemon.ModelJson("uplink", model);
    return json.is_object() && json.contains("symbols_total");
  });
  return json;
}

bool SameNumber(const nlohmann::json& json, double value) {
  if (json.is_null()) return !std::isfinite(value);
  return json.get<double>() == value;
}

TEST(DaemonCheckpoint, KillNineThenRestartResumesFromTheLastCheckpoint) {
  TempDir dir;
  TrainTable(dir);
  const std::string first = ProbeLines(2, 600);
  std::string second;  // written by the sender thread until it is joined

  nlohmann::json before_kill;
  int64_t killed_unix_ns = 0;
  {
    DaemonProcess daemon(dir, Config());
    ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
    SendTcp(daemon.stream_port("uplink"), first);
    ASSERT_TRUE(WaitFor([&] {
      const auto json = daemon.ModelJson("uplink", "bytes");
      return json.is_object() && json.value("symbols_total", 0u) == first.size();
    })) << daemon.Log();
    // Within about one checkpoint interval, a checkpoint holds everything received so far.
    ASSERT_TRUE(WaitFor(
        [&] {
          auto read = ReadModelCheckpoint(CheckpointPath(dir, "bytes"), Identity("bytes"));
          return read.ok() && read.value().model.symbols_total == first.size();
        },
        std::chrono::seconds(5)))
        << daemon.Log();

    // Mid-stream: a sender keeps sending, one connection after another (so the daemon
    // receives one ordered byte stream), until the daemon is killed under it.
    std::atomic<bool> stop{false};
    const uint16_t port = daemon.stream_port("uplink");
    std::thread sender([&second, &stop, port] {
      for (uint64_t i = 0; !stop; ++i) {
        const std::string chunk = ProbeLines(100 + i, 20);
        second += chunk;
        try {
          SendTcp(port, chunk);
        } catch (const std::exception&) {
          break;  // the daemon is gone
        }
      }
    });
    // Let at least one more checkpoint happen while records flow, then kill.
    const auto seen = fs::last_write_time(CheckpointPath(dir, "bytes"));
    const bool another =
        WaitFor([&] { return fs::last_write_time(CheckpointPath(dir, "bytes")) != seen; },
                std::chrono::seconds(5));
    before_kill = daemon.ModelJson("uplink", "bytes");
    killed_unix_ns = CheckpointTimeNow(SteadyClock()).unix_ns;
    daemon.Stop(9);
    stop = true;
    sender.join();
    ASSERT_TRUE(another) << daemon.Log();
  }
  const std::string stream = first + second;

  auto saved = ReadModelCheckpoint(CheckpointPath(dir, "bytes"), Identity("bytes"));
  ASSERT_TRUE(saved.ok()) << saved.error().message;
  auto saved_tokens = ReadModelCheckpoint(CheckpointPath(dir, "tokens"), Identity("tokens"));
  ASSERT_TRUE(saved_tokens.ok()) << saved_tokens.error().message;
  const ModelCheckpoint& checkpoint = saved.value();
  const uint64_t saved_symbols = checkpoint.model.symbols_total;
  ASSERT_GT(saved_symbols, first.size());  // the checkpoint taken while records flowed
  ASSERT_LE(saved_symbols, stream.size());
  // Nothing older than one checkpoint interval (1 s) is lost; the slack covers the evaluation
  // cadence (100 ms) and a busy machine.
  EXPECT_LT(killed_unix_ns - checkpoint.written.unix_ns, 3'000'000'000);

  DaemonProcess daemon(dir, Config());
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  const nlohmann::json bytes = Evaluated(daemon, "bytes");
  ASSERT_TRUE(bytes.is_object()) << daemon.Log();
  EXPECT_EQ(bytes["symbols_total"].get<uint64_t>(), saved_symbols);
  EXPECT_EQ(bytes["window_symbols"].get<uint64_t>(), kWindow);

  // The window holds the last 5000 bytes of what had arrived at the checkpoint, counted here
  // from the bytes sent (the stream is one ordered sequence of connections).
  const std::string tail = stream.substr(saved_symbols - kWindow, kWindow);
  std::map<unsigned char, uint64_t> expected;
  for (const char c : tail) ++expected[static_cast<unsigned char>(c)];
  for (const auto& [symbol, count] : expected) {
    char label[32];
    std::snprintf(label, sizeof label, "symbol=\"0x%02x\"", symbol);
    const auto metric =
        daemon.Metric("codedrift_window_symbol_count", {"model=\"bytes\"", std::string(label)});
    ASSERT_TRUE(metric.has_value()) << label;
    EXPECT_EQ(*metric, static_cast<double>(count)) << label;
  }
  dir.Write("tail.log", tail);
  const auto inspected = RunCommand(CliPath() + " inspect --json --table " +
                                    dir.File("probe.table") + " " + dir.File("tail.log"));
  ASSERT_EQ(inspected.exit_code, 0) << inspected.out;
  const auto reference = nlohmann::json::parse(inspected.out);
  EXPECT_NEAR(bytes["entropy_bits"].get<double>(), reference["entropy_bits"].get<double>(), 1e-9);
  EXPECT_NEAR(bytes["deployed_mean_bits"].get<double>(),
              reference["deployed_mean_bits"].get<double>(), 1e-9);

  // History: the checkpoint's points come first, as the API showed them before the kill.
  const auto& history = bytes["history"];
  std::vector<HistoryPoint> saved_points = checkpoint.history.coarse;
  saved_points.insert(saved_points.end(), checkpoint.history.fine.begin(),
                      checkpoint.history.fine.end());
  ASSERT_GT(saved_points.size(), 5u);
  ASSERT_GE(history.size(), saved_points.size());
  for (size_t i = 0; i < saved_points.size(); ++i) {
    EXPECT_EQ(history[i]["time"].get<double>(), saved_points[i].unix_seconds) << i;
    EXPECT_TRUE(SameNumber(history[i]["entropy_bits"], saved_points[i].entropy_bits)) << i;
  }
  const auto& old_history = before_kill["history"];
  for (size_t i = 0; i < std::min(old_history.size(), saved_points.size()); ++i) {
    EXPECT_EQ(history[i], old_history[i]) << i;
  }

  // The token model (a time window) is back too.
  const nlohmann::json tokens = Evaluated(daemon, "tokens");
  EXPECT_EQ(tokens["symbols_total"].get<uint64_t>(), saved_tokens.value().model.symbols_total);
  EXPECT_EQ(tokens["window_symbols"].get<uint64_t>(),
            WindowTotal(saved_tokens.value().model.window));

  // A clean stop writes a last checkpoint after the final evaluation: nothing received is lost.
  const std::string third = ProbeLines(3, 50);
  SendTcp(daemon.stream_port("uplink"), third);
  EXPECT_EQ(daemon.Stop(), 0) << daemon.Log();
  auto final = ReadModelCheckpoint(CheckpointPath(dir, "bytes"), Identity("bytes"));
  ASSERT_TRUE(final.ok()) << final.error().message;
  EXPECT_EQ(final.value().model.symbols_total, saved_symbols + third.size());
}

// Runs a daemon until it has written a checkpoint with some traffic, then stops it cleanly.
void WriteCheckpoints(const TempDir& dir) {
  DaemonProcess daemon(dir, Config());
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  SendTcp(daemon.stream_port("uplink"), ProbeLines(4, 300));
  ASSERT_EQ(daemon.Stop(), 0) << daemon.Log();
  ASSERT_TRUE(fs::exists(CheckpointPath(dir, "bytes")));
  ASSERT_TRUE(fs::exists(CheckpointPath(dir, "tokens")));
}

bool SetAsideAs(const TempDir& dir, const std::string& model, const std::string& reason) {
  const std::string prefix = model + ".ckpt.bad-" + reason + "-";
  for (const auto& entry : fs::directory_iterator(dir.File("state/checkpoints/uplink"))) {
    if (entry.path().filename().string().starts_with(prefix)) return true;
  }
  return false;
}

TEST(DaemonCheckpoint, DamagedOrNewerCheckpointsAreSetAsideAndTheDaemonStarts) {
  TempDir dir;
  TrainTable(dir);
  WriteCheckpoints(dir);
  // A flipped bit in the bytes model's checkpoint, half of the tokens model's.
  std::string bytes = ReadFile(CheckpointPath(dir, "bytes"));
  bytes[bytes.size() / 2] = static_cast<char>(bytes[bytes.size() / 2] ^ 0x10);
  std::ofstream(CheckpointPath(dir, "bytes"), std::ios::binary | std::ios::trunc) << bytes;
  const std::string tokens = ReadFile(CheckpointPath(dir, "tokens"));
  std::ofstream(CheckpointPath(dir, "tokens"), std::ios::binary | std::ios::trunc)
      << tokens.substr(0, tokens.size() / 2);

  {
    DaemonProcess daemon(dir, Config());
    ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
    const nlohmann::json json = Evaluated(daemon, "bytes");
    EXPECT_EQ(json["symbols_total"].get<uint64_t>(), 0u);  // started empty
    EXPECT_TRUE(SetAsideAs(dir, "bytes", "corrupt"));
    EXPECT_TRUE(SetAsideAs(dir, "tokens", "truncated"));
    EXPECT_NE(daemon.Log().find("crc32 mismatch"), std::string::npos) << daemon.Log();
    EXPECT_EQ(daemon.Stop(), 0) << daemon.Log();
  }

  // A checkpoint from a newer format is refused, not guessed at.
  auto payload = DecodeCheckpointFile(ReadFile(CheckpointPath(dir, "bytes")));
  ASSERT_TRUE(payload.ok());
  std::ofstream(CheckpointPath(dir, "bytes"), std::ios::binary | std::ios::trunc)
      << EncodeCheckpointFile(payload.value(), kCheckpointFormatVersion + 1);
  DaemonProcess daemon(dir, Config());
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  EXPECT_EQ(Evaluated(daemon, "bytes")["symbols_total"].get<uint64_t>(), 0u);
  EXPECT_TRUE(SetAsideAs(dir, "bytes", "newer-format"));
  EXPECT_NE(daemon.Log().find("newer than this build reads"), std::string::npos) << daemon.Log();
}

TEST(DaemonCheckpoint, ChangedModelDefinitionStartsFresh) {
  TempDir dir;
  TrainTable(dir);
  WriteCheckpoints(dir);
  DaemonProcess daemon(dir, Config("state", kWindow * 2));  // the bytes window changed size
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  EXPECT_EQ(Evaluated(daemon, "bytes")["symbols_total"].get<uint64_t>(), 0u);
  EXPECT_GT(Evaluated(daemon, "tokens")["symbols_total"].get<uint64_t>(), 0u);  // unchanged
  EXPECT_TRUE(SetAsideAs(dir, "bytes", "mismatch"));
  EXPECT_NE(daemon.Log().find("another model definition"), std::string::npos) << daemon.Log();
}

TEST(DaemonCheckpoint, UnwritableStateDirIsCountedAndLoggedAndTheDaemonKeepsRunning) {
  TempDir dir;
  TrainTable(dir);
  // state_dir below a regular file: ENOTDIR, which stops root too (tests may run as root,
  // where a chmod would not).
  dir.Write("blocker", "not a directory");
  DaemonProcess daemon(dir, Config("blocker/state"));
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  SendTcp(daemon.stream_port("uplink"), ProbeLines(5, 100));
  // Two models per round: at least two rounds have failed once four failures are counted.
  ASSERT_TRUE(WaitFor([&] {
    return daemon.Metric("codedrift_checkpoint_failures_total").value_or(0) >= 4;
  })) << daemon.Log();
  EXPECT_TRUE(daemon.Running());
  const nlohmann::json json = daemon.ModelJson("uplink", "bytes");
  ASSERT_TRUE(json.is_object());
  EXPECT_GT(json["symbols_total"].get<uint64_t>(), 0u);
  const std::string log = daemon.Log();
  EXPECT_NE(log.find("Not a directory"), std::string::npos) << log;
  // Rate-limited: one line for the first failure, none for the next ones within a minute.
  size_t lines = 0;
  for (size_t at = log.find("checkpoint not written"); at != std::string::npos;
       at = log.find("checkpoint not written", at + 1)) {
    ++lines;
  }
  EXPECT_EQ(lines, 1u) << log;
  EXPECT_EQ(daemon.Stop(), 0) << daemon.Log();
}

}  // namespace
}  // namespace codedrift::testing
