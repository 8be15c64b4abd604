// The scenario reader: the top level, message types and phases. Phases edit a draft of the
// fields and messages in file order, and each phase keeps a snapshot of the draft as it plays.
#include <algorithm>
#include <array>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "codedrift/scenario.h"

#include "daemon_config_text.h"
#include "scenario_parser.h"
#include "scenario_text.h"

namespace codedrift {
namespace {

using namespace scenario_parse;

constexpr std::array<std::string_view, 7> kRootKeys = {"scenario", "title",    "start", "rate",
                                                       "fields",   "messages", "phases"};
constexpr std::array<std::string_view, 5> kPhaseKeys = {"name", "records", "duration", "rate",
                                                        "changes"};

constexpr size_t kMaxPhases = 256;
constexpr double kMaxRate = 1e9;
constexpr uint64_t kMaxRecords = 1'000'000'000'000;
constexpr double kMaxSimulatedSeconds = 100 * 365.25 * 86400;  // keeps nanoseconds in int64
constexpr size_t kMaxFileBytes = size_t{16} << 20;

// "YYYY-MM-DDTHH:MM:SSZ" (UTC, 1970..9999) as unix seconds.
std::optional<int64_t> ParseUtc(std::string_view text) {
  using namespace std::chrono;
  if (text.size() != 20 || text[4] != '-' || text[7] != '-' || text[10] != 'T' || text[13] != ':' ||
      text[16] != ':' || text[19] != 'Z') {
    return std::nullopt;
  }
  auto number = [&](size_t at, size_t digits) -> int {
    int value = 0;
    for (size_t i = at; i < at + digits; ++i) {
      if (text[i] < '0' || text[i] > '9') return -1;
      value = value * 10 + (text[i] - '0');
    }
    return value;
  };
  const int y = number(0, 4), mo = number(5, 2), d = number(8, 2);
  const int h = number(11, 2), mi = number(14, 2), s = number(17, 2);
  const year_month_day date{year{y}, month{static_cast<unsigned>(std::max(mo, 0))},
                            day{static_cast<unsigned>(std::max(d, 0))}};
  if (y < 1970 || !date.ok() || h < 0 || h > 23 || mi < 0 || mi > 59 || s < 0 || s > 59) {
    return std::nullopt;
  }
  return sys_days{date}.time_since_epoch().count() * int64_t{86400} + int64_t{h} * 3600 +
         int64_t{mi} * 60 + s;
}

class ScenarioReader {
 public:
  explicit ScenarioReader(ConfigDiagnostics& diagnostics) : d_(diagnostics) {}

  std::optional<Scenario> Read(const YAML::Node& document) {
    const ConfigEntry root{"scenario file", PositionOf(document), document};
    const std::optional<ConfigMap> map = ConfigMap::Open(root, "the scenario", kRootKeys, d_);
    if (!map) return std::nullopt;
    Scenario scenario;
    bool ok = true;
    if (const ConfigEntry* e = map->Require("scenario", d_)) ok = ReadInteger(*e, 1, 1, d_) && ok;
    if (const ConfigEntry* e = map->Find("title")) {
      const std::optional<std::string> title = ReadString(*e, d_);
      if (title) scenario.title = *title;
      ok = title.has_value() && ok;
    }
    scenario.start_unix_seconds = *ParseUtc("2030-01-01T00:00:00Z");
    if (const ConfigEntry* e = map->Find("start")) {
      const std::optional<int64_t> start =
          e->value.IsScalar() ? ParseUtc(e->value.Scalar()) : std::nullopt;
      if (start) {
        scenario.start_unix_seconds = *start;
      } else {
        ReportValue(*e, "expected a UTC time like 2031-04-01T06:00:00Z", d_);
        ok = false;
      }
    }
    double rate = 1;
    if (const ConfigEntry* e = map->Find("rate")) {
      const std::optional<double> value = ReadPositive(*e, kMaxRate, d_);
      rate = value.value_or(rate);
      ok = value.has_value() && ok;
    }
    const ConfigEntry* fields = map->Require("fields", d_);
    const ConfigEntry* messages = map->Require("messages", d_);
    const ConfigEntry* phases = map->Require("phases", d_);
    // Messages name fields and phases name both: stop at the first section that fails.
    if (fields == nullptr || !draft_.ReadFields(*fields)) return std::nullopt;
    if (messages == nullptr || !ReadMessages(*messages)) return std::nullopt;
    if (phases == nullptr || !ReadPhases(*phases, rate, scenario)) return std::nullopt;
    if (!ok) return std::nullopt;
    return scenario;
  }

 private:
  bool ReadMessages(const ConfigEntry& entry) {
    const std::optional<std::vector<ConfigEntry>> items = ReadList(entry, d_);
    if (!items) return false;
    if (items->empty()) {
      ReportValue(entry, "expected at least one message type", d_);
      return false;
    }
    bool ok = true;
    for (const ConfigEntry& item : *items) {
      std::optional<ScenarioMessage> message = draft_.ReadMessage(item, "message");
      ok = message && draft_.AddMessage(std::move(*message), item) && ok;
    }
    return ok;
  }

  bool ReadPhases(const ConfigEntry& entry, double default_rate, Scenario& scenario) {
    const std::optional<std::vector<ConfigEntry>> items = ReadList(entry, d_);
    if (!items) return false;
    if (items->empty() || items->size() > kMaxPhases) {
      ReportValue(entry, "expected 1 to 256 phases", d_);
      return false;
    }
    bool ok = true;
    double total_seconds = 0;
    for (const ConfigEntry& item : *items) {
      std::optional<ScenarioPhase> phase = ReadPhase(item, default_rate);
      if (!phase) {
        ok = false;
        continue;
      }
      if (scenario.FindPhase(phase->name)) {
        ReportValue(item, "a phase named '" + phase->name + "' already exists", d_);
        ok = false;
        continue;
      }
      total_seconds += static_cast<double>(phase->records) / phase->rate;
      if (total_seconds > kMaxSimulatedSeconds) {
        ReportValue(item, "the scenario would last over 100 simulated years", d_);
        return false;
      }
      if (!scenario.phases.empty()) {
        const ScenarioPhase& last = scenario.phases.back();
        phase->start = last.start + last.Duration();
      }
      scenario.phases.push_back(std::move(*phase));
    }
    return ok;
  }

  std::optional<ScenarioPhase> ReadPhase(const ConfigEntry& entry, double default_rate) {
    const std::optional<ConfigMap> map = ConfigMap::Open(entry, "phase", kPhaseKeys, d_);
    if (!map) return std::nullopt;
    ScenarioPhase phase;
    phase.rate = default_rate;
    bool ok = true;
    if (const ConfigEntry* e = map->Require("name", d_)) {
      const std::optional<std::string> name = ReadName(*e, d_);
      if (name) phase.name = *name;
      ok = name.has_value() && ok;
    } else {
      ok = false;
    }
    if (const ConfigEntry* e = map->Find("rate")) {
      const std::optional<double> rate = ReadPositive(*e, kMaxRate, d_);
      if (rate) phase.rate = *rate;
      ok = rate.has_value() && ok;
    }
    const ConfigEntry* records = map->Find("records");
    const ConfigEntry* duration = map->Find("duration");
    if ((records == nullptr) == (duration == nullptr)) {
      d_.Report(records != nullptr ? records->key_position : map->position(),
                "a phase lasts either `records: N` or `duration: 10m`, expected exactly one");
      ok = false;
    } else if (records != nullptr) {
      const std::optional<uint64_t> count = ReadInteger(*records, 1, kMaxRecords, d_);
      phase.records = count.value_or(0);
      ok = count.has_value() && ok;
    } else if (const std::optional<ConfigDuration> length =
                   ReadDuration(*duration, ConfigDuration(1), d_);
               length && ok) {
      const double exact = static_cast<double>(length->count()) / 1000 * phase.rate;
      const double nearest = std::round(exact);
      const double whole = std::fabs(exact - nearest) < 1e-6 ? nearest : std::floor(exact);
      if (whole < 1 || whole > static_cast<double>(kMaxRecords)) {
        ReportValue(*duration,
                    duration->value.Scalar() + " at " + scenario_text::NumberText(phase.rate) +
                        " records/s gives " + scenario_text::NumberText(whole) +
                        " records, expected 1 to 10^12",
                    d_);
        ok = false;
      }
      phase.records = static_cast<uint64_t>(whole);
    } else {
      ok = false;
    }
    if (ok && static_cast<double>(phase.records) / phase.rate > kMaxSimulatedSeconds) {
      d_.Report(map->position(), "the phase would last over 100 simulated years");
      ok = false;
    }
    if (const ConfigEntry* e = map->Find("changes")) {
      const std::optional<std::vector<ConfigEntry>> changes = ReadList(*e, d_);
      ok = changes.has_value() && ok;
      for (const ConfigEntry& change : changes.value_or(std::vector<ConfigEntry>())) {
        ok = ApplyChange(change, draft_, phase.changes) && ok;
      }
    }
    if (!ok) return std::nullopt;
    phase.fields = draft_.fields();
    phase.messages = draft_.messages();
    return phase;
  }

  ConfigDiagnostics& d_;
  ScenarioDraft draft_{d_};
};

}  // namespace

std::chrono::nanoseconds ScenarioPhase::OffsetOf(uint64_t index) const {
  return std::chrono::nanoseconds(std::llround(static_cast<double>(index) * 1e9 / rate));
}

uint64_t Scenario::TotalRecords() const {
  uint64_t total = 0;
  for (const ScenarioPhase& phase : phases) total += phase.records;
  return total;
}

std::optional<size_t> Scenario::FindPhase(std::string_view name) const {
  for (size_t i = 0; i < phases.size(); ++i) {
    if (phases[i].name == name) return i;
  }
  return std::nullopt;
}

Result<Scenario> ParseScenario(std::string_view yaml_text, std::string_view file_name) {
  ConfigDiagnostics diagnostics{std::string(file_name)};
  std::vector<YAML::Node> documents;
  try {
    documents = YAML::LoadAll(std::string(yaml_text));
  } catch (const YAML::Exception& error) {
    diagnostics.Report({error.mark.line + 1, error.mark.column + 1},
                       "YAML syntax error: " + error.msg);
    return Error{diagnostics.Joined()};
  } catch (const std::exception& error) {
    diagnostics.Report({}, std::string("cannot parse YAML: ") + error.what());
    return Error{diagnostics.Joined()};
  }
  if (documents.size() > 1) {
    diagnostics.Report(PositionOf(documents[1]),
                       "a second YAML document starts here, expected a single document");
    return Error{diagnostics.Joined()};
  }
  std::optional<Scenario> scenario;
  try {
    ScenarioReader reader(diagnostics);
    scenario = reader.Read(documents.empty() ? YAML::Node() : documents[0]);
  } catch (const std::exception& error) {
    // yaml-cpp accessors throw only on misuse; keep any such slip from crossing the API.
    diagnostics.Report({}, std::string("internal error reading the scenario: ") + error.what());
  }
  if (!scenario || diagnostics.has_errors()) return Error{diagnostics.Joined()};
  return std::move(*scenario);
}

Result<Scenario> LoadScenario(const std::string& path) {
  std::error_code error;
  if (std::filesystem::is_directory(path, error)) {
    return Error{path + ": is a directory, expected a scenario file"};
  }
  std::ifstream file(path, std::ios::binary);
  if (!file) return Error{path + ": cannot open the scenario file"};
  std::ostringstream text;
  text << file.rdbuf();
  if (!file.good() && !file.eof()) return Error{path + ": cannot read the scenario file"};
  if (text.str().size() > kMaxFileBytes) {
    return Error{path + ": the scenario file is larger than 16 MiB"};
  }
  return ParseScenario(text.str(), path);
}

}  // namespace codedrift
