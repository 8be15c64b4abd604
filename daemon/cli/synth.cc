// `codedrift synth`: plays a scenario file (lib scenario.h) to stdout, a file or a socket,
// optionally paced on the scenario's simulated clock, or lists its phases.
#include "synth.h"

#include <chrono>
#include <iostream>
#include <limits>
#include <memory>
#include <optional>
#include <thread>

#include "codedrift/scenario.h"

#include "cli_common.h"
#include "synth_output.h"
#include "text_table.h"

namespace codedrift::cli {
namespace {

using Clock = std::chrono::steady_clock;

constexpr char kCommand[] = "synth";

struct SynthOptions {
  std::string scenario;
  uint64_t seed = 1;
  std::optional<double> speed;
  std::string to = "-";
  std::string phase;
  std::optional<uint64_t> records;
  bool list = false;
};

std::string RateText(double rate) { return FormatNumber(rate, 6) + "/s"; }

std::string MessageSummary(const ScenarioPhase& phase) {
  std::string out;
  for (const ScenarioMessage& message : phase.messages) {
    if (!out.empty()) out += ", ";
    out += message.name + " (weight " + FormatNumber(message.weight, 6) + ")";
  }
  return out;
}

void PrintList(const std::string& path, const Scenario& scenario) {
  const ScenarioPhase& last = scenario.phases.back();
  std::cout << path << (scenario.title.empty() ? "" : ": " + scenario.title) << "\n"
            << scenario.phases.size() << (scenario.phases.size() == 1 ? " phase, " : " phases, ")
            << scenario.TotalRecords() << " records, "
            << FormatSimulatedDuration(last.start + last.Duration()) << " simulated from "
            << FormatUtc(scenario.start_unix_seconds, std::chrono::nanoseconds(0), 0) << "\n";
  for (size_t i = 0; i < scenario.phases.size(); ++i) {
    const ScenarioPhase& phase = scenario.phases[i];
    // Milliseconds only when a phase starts between whole seconds.
    const int decimals = phase.start.count() % 1'000'000'000 == 0 ? 0 : 3;
    std::cout << "phase " << i + 1 << " " << phase.name << ": " << phase.records
              << (phase.records == 1 ? " record at " : " records at ") << RateText(phase.rate)
              << " for " << FormatSimulatedDuration(phase.Duration()) << ", from "
              << FormatUtc(scenario.start_unix_seconds, phase.start, decimals) << "\n";
    if (i == 0) std::cout << "  messages: " << MessageSummary(phase) << "\n";
    if (i > 0 && phase.changes.empty()) std::cout << "  (no changes)\n";
    for (const std::string& change : phase.changes) std::cout << "  " << change << "\n";
  }
}

int RunSynth(const SynthOptions& options) {
  Result<Scenario> scenario = LoadScenario(options.scenario);
  if (!scenario.ok()) {
    PrintError(kCommand, scenario.error().message);
    return kExitInvalidInput;
  }
  if (options.list) {
    PrintList(options.scenario, scenario.value());
    return kExitOk;
  }
  std::optional<size_t> only_phase;
  if (!options.phase.empty()) {
    only_phase = scenario.value().FindPhase(options.phase);
    if (!only_phase) {
      std::string names;
      for (const ScenarioPhase& phase : scenario.value().phases) {
        names += (names.empty() ? "" : ", ") + phase.name;
      }
      PrintError(kCommand, "--phase '" + options.phase + "': " + options.scenario +
                               " has no such phase, expected one of " + names);
      return kExitUsage;
    }
  }
  Result<OutputAddress> address = ParseOutputAddress(options.to);
  if (!address.ok()) {
    PrintError(kCommand, address.error().message);
    return kExitUsage;
  }
  Result<std::unique_ptr<RecordOutput>> opened = OpenRecordOutput(address.value());
  if (!opened.ok()) {
    PrintError(kCommand, opened.error().message);
    return kExitInvalidInput;
  }
  RecordOutput& output = *opened.value();
  // Sockets feed a listener: real time by default. Files and pipes: as fast as possible.
  const double speed = options.speed.value_or(output.is_socket() ? 1.0 : 0.0);

  Synthesizer synthesizer(std::move(scenario).value(), options.seed);
  if (only_phase) synthesizer.SkipToPhase(*only_phase);
  const uint64_t limit = options.records.value_or(std::numeric_limits<uint64_t>::max());
  const Clock::time_point start = Clock::now();
  std::optional<std::chrono::nanoseconds> first_offset;
  std::chrono::nanoseconds last_offset{0};
  uint64_t records = 0;
  uint64_t bytes = 0;
  Status failure = Ok{};
  while (records < limit && failure.ok()) {
    const std::optional<SyntheticRecord> record = synthesizer.Next();
    if (!record || (only_phase && record->phase != *only_phase)) break;
    if (!first_offset) first_offset = record->offset;
    last_offset = record->offset;
    if (speed > 0) {
      const auto due =
          start +
          std::chrono::duration_cast<Clock::duration>(std::chrono::duration<double>(
              std::chrono::duration<double>(record->offset - *first_offset).count() / speed));
      if (Clock::now() < due) {
        failure = output.Flush();
        if (!failure.ok()) break;
        std::this_thread::sleep_until(due);
      }
    }
    Result<size_t> written = output.Write(record->line);
    if (!written.ok()) {
      failure = written.error();
      break;
    }
    bytes += written.value();
    ++records;
  }
  if (failure.ok()) failure = output.Flush();
  if (!failure.ok()) {
    if (output.reader_gone()) return kExitOk;  // e.g. `codedrift synth ... | head`
    PrintError(kCommand,
               failure.error().message + " after " + std::to_string(records) + " records");
    return kExitInvalidInput;
  }
  if (address.value().kind != OutputAddress::Kind::kStdout) {
    const double seconds = std::chrono::duration<double>(Clock::now() - start).count();
    const std::chrono::nanoseconds simulated =
        first_offset ? last_offset - *first_offset : std::chrono::nanoseconds(0);
    const bool file = address.value().kind == OutputAddress::Kind::kFile;
    std::cout << (file ? "wrote " : "sent ") << records << " records, " << bytes << " bytes to "
              << output.name() << " in " << FormatNumber(seconds, 3) << " s ("
              << FormatSimulatedDuration(simulated) << " simulated)\n";
  }
  return kExitOk;
}

}  // namespace

void AddSynthCommand(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<SynthOptions>();
  CLI::App* command = app.add_subcommand(
      "synth", "Generate telemetry records from a scenario file, e.g. to rehearse thresholds.");
  command->footer(
      "A scenario (see config/scenarios/) describes record templates and phases that change "
      "them over simulated time. The same scenario and --seed give the same bytes.\n"
      "--to: - (stdout, the default), a file path, tcp://HOST:PORT (lines) or udp://HOST:PORT "
      "(one datagram per record, without its newline).\n"
      "--speed X plays simulated time X times faster than real time (the sender sleeps when "
      "ahead; it never spins). Default: as fast as possible to stdout or a file, real time (1) "
      "to a socket; 0 means as fast as possible.\n"
      "--phase NAME emits only that phase, exactly as a full run emits it.\n"
      "Exit codes: 0 ok, 1 invalid scenario file or a write/connection failure, 2 usage error.");
  command->add_option("scenario", options->scenario, "Scenario file (YAML)")->required();
  command->add_option("--seed", options->seed, "Seed of the generator (default 1)");
  command->add_option("--speed", options->speed, "Simulated seconds per real second")
      ->check(CLI::NonNegativeNumber);
  command->add_option("--to", options->to, "-, FILE, tcp://HOST:PORT or udp://HOST:PORT");
  command->add_option("--phase", options->phase, "Emit only this phase");
  command->add_option("--records", options->records, "Stop after this many records");
  command->add_flag("--list", options->list,
                    "Print the phases, their record counts and what each changes; emit nothing");
  command->callback([options, &exit_code] { exit_code = RunSynth(*options); });
}

}  // namespace codedrift::cli
