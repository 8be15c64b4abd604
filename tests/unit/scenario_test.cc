// Scenario files: what a valid file parses to, and every error with its message and 1-based
// line:column. Positions are found in the YAML text itself (the column of a piece of text on
// its line), never taken from the parser. Scenarios are invented for the tests.
#include "codedrift/scenario.h"

#include <filesystem>
#include <string>
#include <vector>

#include <gtest/gtest.h>

namespace codedrift {
namespace {

using std::chrono::milliseconds;
using std::chrono::seconds;

// Lines 1-4, then field `v` on line 5 (its definition starts at column 6), then lines 6-11:
// the message on line 9, the phases from line 10.
constexpr std::string_view kHead =
    "scenario: 1\n"
    "rate: 2\n"
    "fields:\n"
    "  t: {kind: time, format: epoch}\n";
constexpr std::string_view kDefaultV = "{kind: number, range: [0, 10], decimals: 1}";
constexpr std::string_view kTail =
    "  s: {kind: choice, values: {ok: 3, bad: 1}}\n"
    "  r: {kind: number, range: [-120, -80]}\n"
    "messages:\n"
    "  - {name: m, fields: [t, v, s]}\n"
    "phases:\n"
    "  - {name: base, records: 10}\n";

std::string WithV(std::string_view v) {
  return std::string(kHead) + "  v: " + std::string(v) + "\n" + std::string(kTail);
}
std::string Base() { return WithV(kDefaultV); }

// Base() plus a second phase whose one change sits on line 15, from column 9.
std::string WithChange(std::string_view change) {
  return Base() + "  - name: two\n    records: 10\n    changes:\n      - " + std::string(change) +
         "\n";
}

std::string Replace(std::string text, std::string_view from, std::string_view to) {
  const size_t at = text.find(from);
  EXPECT_NE(at, std::string::npos) << from;
  if (at != std::string::npos) text.replace(at, from.size(), to);
  return text;
}

// "s.yaml:LINE:COLUMN: " where COLUMN is where `needle` starts on line LINE of `text`.
std::string At(const std::string& text, int line, std::string_view needle) {
  size_t start = 0;
  for (int i = 1; i < line; ++i) start = text.find('\n', start) + 1;
  const size_t end = text.find('\n', start);
  const std::string row = text.substr(start, end - start);
  const size_t column = row.find(needle);
  EXPECT_NE(column, std::string::npos) << "line " << line << " has no " << needle;
  return "s.yaml:" + std::to_string(line) + ":" + std::to_string(column + 1) + ": ";
}

std::string ErrorOf(const std::string& text) {
  Result<Scenario> scenario = ParseScenario(text, "s.yaml");
  return scenario.ok() ? "(no error)" : scenario.error().message;
}

Scenario ParseOk(const std::string& text) {
  Result<Scenario> scenario = ParseScenario(text, "s.yaml");
  EXPECT_TRUE(scenario.ok()) << scenario.error().message;
  return scenario.ok() ? scenario.value() : Scenario{};
}

TEST(ScenarioParse, ReadsFieldsMessagesAndPhases) {
  const Scenario scenario = ParseOk(WithChange("add_field: {message: m, field: r, after: v}"));
  ASSERT_EQ(scenario.phases.size(), 2u);
  const ScenarioPhase& base = scenario.phases[0];
  const ScenarioPhase& two = scenario.phases[1];
  EXPECT_EQ(base.name, "base");
  EXPECT_EQ(base.records, 10u);
  EXPECT_EQ(base.rate, 2);
  ASSERT_EQ(base.fields.size(), 4u);
  EXPECT_EQ(base.fields[1].name, "v");
  const auto& v = std::get<NumberField>(base.fields[1].shape);
  EXPECT_EQ(v.low, 0);
  EXPECT_EQ(v.high, 10);
  EXPECT_EQ(v.decimals, 1);
  EXPECT_EQ(v.distribution, Distribution::kUniform);
  const auto& s = std::get<ChoiceField>(base.fields[2].shape);
  EXPECT_EQ(s.values, (std::vector<std::string>{"ok", "bad"}));
  EXPECT_EQ(s.weights, (std::vector<double>{3, 1}));
  ASSERT_EQ(base.messages.size(), 1u);
  EXPECT_EQ(base.messages[0].fields, (std::vector<size_t>{0, 1, 2}));
  // The change shows from phase two on only, and phase two starts when 10 records at 2/s end.
  EXPECT_TRUE(base.changes.empty());
  EXPECT_EQ(two.messages[0].fields, (std::vector<size_t>{0, 1, 3, 2}));
  EXPECT_EQ(two.start, seconds(5));
  EXPECT_EQ(two.OffsetOf(3), milliseconds(1500));
  EXPECT_EQ(scenario.TotalRecords(), 20u);
  EXPECT_EQ(scenario.FindPhase("two"), std::optional<size_t>(1));
  EXPECT_EQ(scenario.FindPhase("three"), std::nullopt);
}

TEST(ScenarioParse, StartTimeIsUnixSeconds) {
  // 2000-01-01T00:00:00Z is Unix time 946684800 (widely published; from memory), and
  // 2038-01-19T03:14:07Z is 2^31 - 1, the last second a signed 32-bit time_t holds.
  EXPECT_EQ(ParseOk(Replace(Base(), "rate: 2", "start: 2000-01-01T00:00:00Z")).start_unix_seconds,
            946684800);
  EXPECT_EQ(ParseOk(Replace(Base(), "rate: 2", "start: 2038-01-19T03:14:07Z")).start_unix_seconds,
            2147483647);
}

TEST(ScenarioParse, DurationGivesRecordsAtTheRate) {
  const Scenario scenario =
      ParseOk(Replace(Base(), "{name: base, records: 10}", "{name: base, duration: 10m}"));
  EXPECT_EQ(scenario.phases[0].records, 1200u);  // 600 s at 2 records/s
  const Scenario slow = ParseOk(
      Replace(Base(), "{name: base, records: 10}", "{name: base, duration: 1h, rate: 0.05}"));
  EXPECT_EQ(slow.phases[0].records, 180u);
  EXPECT_EQ(slow.phases[0].Duration(), std::chrono::hours(1));
}

TEST(ScenarioParse, EachChangeSaysWhatItChanged) {
  auto described = [](std::string_view change) {
    const Scenario scenario = ParseOk(WithChange(change));
    return scenario.phases.size() == 2 && scenario.phases[1].changes.size() == 1
               ? scenario.phases[1].changes[0]
               : std::string("(none)");
  };
  EXPECT_EQ(described("add_field: {message: m, field: r, after: v}"), "m: adds field r after v");
  EXPECT_EQ(described("add_field: {message: m, field: r, before: t}"), "m: adds field r before t");
  EXPECT_EQ(described("add_field: {message: m, field: r}"), "m: adds field r at the end");
  EXPECT_EQ(described("remove_field: {message: m, field: s}"), "m: drops field s");
  EXPECT_EQ(described("reweight: {message: m, weight: 4}"), "m: weight 1 -> 4");
  EXPECT_EQ(described("add_message: {name: n, weight: 0.5, layout: csv, fields: [t, r]}"),
            "new message n (weight 0.5, csv: t, r)");
  EXPECT_EQ(described("retune: {field: v, decimals: 3, range: [5, 30]}"),
            "v: range 0..10 -> 5..30, decimals 1 -> 3");
  EXPECT_EQ(described("retune: {field: r, format: hex, range: [80, 120]}"),
            "r: range -120..-80 -> 80..120, format decimal -> hex");
  EXPECT_EQ(described("retune: {field: v, key: volts}"), "v: key v -> volts");
  EXPECT_EQ(described("retune: {field: s, values: {ok: 1, bad: 1}}"),
            "s: values ok:3 bad:1 -> ok:1 bad:1");
}

TEST(ScenarioParse, RemoveMessageNeedsAnotherOne) {
  const std::string text = WithChange("add_message: {name: n, fields: [t]}") +
                           "  - name: three\n    records: 1\n    changes:\n"
                           "      - remove_message: {message: m}\n";
  const Scenario scenario = ParseOk(text);
  ASSERT_EQ(scenario.phases.size(), 3u);
  ASSERT_EQ(scenario.phases[2].messages.size(), 1u);
  EXPECT_EQ(scenario.phases[2].messages[0].name, "n");
  EXPECT_EQ(scenario.phases[2].changes, (std::vector<std::string>{"message m stops"}));
}

struct ErrorCase {
  std::string name;
  std::string text;
  int line;
  std::string needle;  // where on the line the error points
  std::string message;
};

std::vector<ErrorCase> ErrorCases() {
  const std::string head_v = "{kind: number, range: [0, 10], decimals: 1}";
  return {
      {"UnknownTopKey", Replace(Base(), "phases:", "phses:"), 10, "phses",
       "unknown key 'phses' in the scenario (did you mean 'phases'?)"},
      {"UnknownFieldKey", WithV("{kind: number, range: [0, 10], decimal: 1}"), 5, "decimal",
       "unknown key 'decimal' in field 'v' (did you mean 'decimals'?)"},
      {"KeyOfAnotherKind", WithV("{kind: choice, values: [a, b], sd: 2}"), 5, "sd",
       "key 'sd' does not apply to a choice field, expected key or values"},
      {"MissingKind", WithV("{range: [0, 10]}"), 5, "{",
       "missing required key 'kind' in field 'v'"},
      {"UnknownKind", WithV("{kind: nubmer, range: [0, 10]}"), 5, "nubmer",
       "kind: unknown value 'nubmer' (did you mean 'number'?)"},
      {"RangeBackwards", WithV("{kind: number, range: [10, 0]}"), 5, "[",
       "range: low end 10 is above high end 0, expected [low, high]"},
      {"HexWithDecimals", WithV("{kind: number, range: [0, 10], decimals: 1, format: hex}"), 5,
       "hex", "format: hex numbers need decimals: 0 and a range that is not negative"},
      {"RangeWithoutGridPoint", WithV("{kind: number, range: [0.25, 0.75]}"), 5, "[",
       "range: range 0.25..0.75 holds no number with 0 decimals, expected a wider range or more "
       "decimals"},
      {"MeanOutsideRange", WithV("{kind: number, range: [0, 10], distribution: normal, mean: 12}"),
       5, "12", "mean: mean 12 is outside range 0..10"},
      {"QuotedNumber", WithV("{kind: number, range: [\"0\", 10]}"), 5, "\"0\"",
       "range: expected a number, got '0'"},
      {"EpochMillisWithDecimals", WithV("{kind: time, format: epoch_ms, decimals: 3}"), 5, "3}",
       "decimals: epoch_ms times are whole milliseconds, expected decimals: 0"},
      {"CounterFromOutsideWrap", WithV("{kind: counter, from: 16, wrap: 16}"), 5, "16,",
       "from: from 16 is outside [0, wrap) with wrap 16"},
      {"ZeroWeight", WithV("{kind: choice, values: {a: 0, b: 1}}"), 5, "0, b",
       "weight of 'a': 0 is out of range, expected a number above 0 and at most 1e+15"},
      {"BadFieldName", Replace(Base(), "  v: {", "  v=1: {"), 5, "v=1",
       "field name 'v=1' is not valid, expected 1 to 64 characters from a-z, A-Z, 0-9, _, - and ."},
      {"YamlSyntax", WithV("{kind: number, range: [0, 10}"), 5, "", "YAML syntax error"},
      {"Empty", "", 1, "", "scenario file: expected a mapping, got nothing"},
      {"WrongVersion", Replace(Base(), "scenario: 1", "scenario: 2"), 1, "2",
       "scenario: 2 is out of range, expected 1..1"},
      {"BadStart", Replace(Base(), "rate: 2", "start: 2031-02-30T00:00:00Z"), 2, "2031",
       "start: expected a UTC time like 2031-04-01T06:00:00Z"},
      {"UnknownFieldInMessage", Replace(Base(), "[t, v, s]", "[t, vv, s]"), 9, "vv",
       "fields: unknown field 'vv' (did you mean 'v'?)"},
      {"FieldTwiceInMessage", Replace(Base(), "[t, v, s]", "[t, v, t]"), 9, "t]",
       "fields: field 't' is listed twice"},
      {"RecordsAndDuration",
       Replace(Base(), "{name: base, records: 10}", "{name: base, records: 10, duration: 5s}"), 11,
       "records", "a phase lasts either `records: N` or `duration: 10m`, expected exactly one"},
      {"NeitherRecordsNorDuration", Replace(Base(), "{name: base, records: 10}", "{name: base}"),
       11, "{", "a phase lasts either `records: N` or `duration: 10m`, expected exactly one"},
      {"DurationUnderOneRecord",
       Replace(Base(), "{name: base, records: 10}", "{name: base, duration: 100ms}"), 11, "100ms",
       "duration: 100ms at 2 records/s gives 0 records, expected 1 to 10^12"},
      {"DuplicatePhase",
       Replace(WithChange("reweight: {message: m, weight: 2}"), "name: two", "name: base"), 12,
       "name", "phases: a phase named 'base' already exists"},
      {"UnknownChange", WithChange("add_feild: {message: m, field: r}"), 15, "add_feild",
       "unknown key 'add_feild' in change (did you mean 'add_field'?)"},
      {"TwoChangesInOneItem",
       WithChange("{reweight: {message: m, weight: 2}, retune: {field: v, decimals: 2}}"), 15, "{",
       "a change is one of add_field, remove_field, add_message, remove_message, reweight or "
       "retune, expected exactly one of them per list item"},
      {"AddFieldToUnknownMessage", WithChange("add_field: {message: mm, field: r}"), 15, "mm",
       "message: no message 'mm' (did you mean 'm'?)"},
      {"AddFieldTwice", WithChange("add_field: {message: m, field: v}"), 15, "v}",
       "field: message m already has field 'v'"},
      {"AddFieldAfterAndBefore",
       WithChange("add_field: {message: m, field: r, after: t, before: s}"), 15, "before",
       "give `after` or `before`, not both"},
      {"AddFieldByAbsentAnchor", WithChange("add_field: {message: m, field: r, after: r}"), 15,
       "r}", "after: message m has no field 'r' to place it by"},
      {"RemoveAbsentField", WithChange("remove_field: {message: m, field: r}"), 15, "r}",
       "field: message m has no field 'r' here"},
      {"RemoveLastMessage", WithChange("remove_message: {message: m}"), 15, "m}",
       "message: cannot remove the last message type"},
      {"DuplicateMessage", WithChange("add_message: {name: m, fields: [t]}"), 15, "{name",
       "add_message: a message named 'm' already exists"},
      {"RetuneKind", WithChange("retune: {field: v, kind: choice}"), 15, "kind",
       "a field keeps its kind (v is a number field), expected a new field added with add_field"},
      {"RetuneUnknownField", WithChange("retune: {field: volts, decimals: 2}"), 15, "volts",
       "field: unknown field 'volts', expected a field defined under fields:"},
      {"RetuneNothing", WithChange("retune: {field: v}"), 15, "{field",
       "retune of v changes nothing"},
      {"RetuneMakesHexWithDecimals", WithChange("retune: {field: v, format: hex}"), 15, "hex",
       "format: hex numbers need decimals: 0 and a range that is not negative"},
  };
}

class ScenarioErrorTest : public testing::TestWithParam<ErrorCase> {};

TEST_P(ScenarioErrorTest, ReportsPositionAndReason) {
  const ErrorCase& c = GetParam();
  const std::string error = ErrorOf(c.text);
  const std::string where =
      c.needle.empty() ? "s.yaml:" + std::to_string(c.line) + ":" : At(c.text, c.line, c.needle);
  EXPECT_NE(error.find(where + (c.needle.empty() ? "" : c.message)), std::string::npos)
      << "expected " << where << c.message << "\ngot:\n"
      << error;
  EXPECT_NE(error.find(c.message), std::string::npos) << error;
}

INSTANTIATE_TEST_SUITE_P(Errors, ScenarioErrorTest, testing::ValuesIn(ErrorCases()),
                         [](const testing::TestParamInfo<ErrorCase>& info) {
                           return info.param.name;
                         });

TEST(ScenarioParse, ReportsEveryErrorInFileOrder) {
  const std::string text = Replace(Replace(Base(), "decimals: 1}", "decimals: 9}"),
                                   "{ok: 3, bad: 1}", "{ok: 3, bad: -1}");
  const std::string error = ErrorOf(text);
  const std::string first = At(text, 5, "9}") + "decimals: 9 is out of range, expected 0..6";
  const std::string second = At(text, 6, "-1") + "weight of 'bad': -1 is out of range";
  ASSERT_NE(error.find(first), std::string::npos) << error;
  ASSERT_NE(error.find(second), std::string::npos) << error;
  EXPECT_LT(error.find(first), error.find(second));
}

TEST(ScenarioLoad, NamesTheFileWhenItCannotBeRead) {
  const std::string missing = testing::TempDir() + "/no-such-scenario.yaml";
  Result<Scenario> result = LoadScenario(missing);
  ASSERT_FALSE(result.ok());
  EXPECT_EQ(result.error().message, missing + ": cannot open the scenario file");
  Result<Scenario> directory = LoadScenario(testing::TempDir());
  ASSERT_FALSE(directory.ok());
  EXPECT_NE(directory.error().message.find("is a directory"), std::string::npos);
}

TEST(ScenarioLoad, ShippedScenariosHaveAStationaryPhaseThenShifts) {
  const std::filesystem::path dir =
      std::filesystem::path(CODEDRIFT_SOURCE_DIR) / "config" / "scenarios";
  int found = 0;
  for (const char* name : {"orchard-probes.yaml", "river-gauges.yaml", "wagon-bus.yaml"}) {
    SCOPED_TRACE(name);
    Result<Scenario> scenario = LoadScenario((dir / name).string());
    ASSERT_TRUE(scenario.ok()) << scenario.error().message;
    const std::vector<ScenarioPhase>& phases = scenario.value().phases;
    ASSERT_GE(phases.size(), 2u);
    EXPECT_TRUE(phases[0].changes.empty());
    for (size_t i = 1; i < phases.size(); ++i) EXPECT_FALSE(phases[i].changes.empty());
    ++found;
  }
  EXPECT_EQ(found, 3);
}

}  // namespace
}  // namespace codedrift
