// The Synthesizer and its samplers: determinism, phases showing up where they start, simulated
// time, value formats, and distribution checks against outside values (sources beside each
// check). Statistical checks use 5 standard errors, so a correct sampler fails about once in
// 1.7 million runs; the seeds are fixed, so a run is reproducible either way.
#include <algorithm>
#include <cmath>
#include <map>
#include <regex>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "codedrift/scenario.h"
#include "codedrift/scenario_sampling.h"

namespace codedrift {
namespace {

Scenario ParseOk(const std::string& text) {
  Result<Scenario> scenario = ParseScenario(text, "test.yaml");
  EXPECT_TRUE(scenario.ok()) << scenario.error().message;
  return scenario.ok() ? scenario.value() : Scenario{};
}

// Every record of a run, without the trailing newlines checked separately.
std::vector<std::string> Lines(const Scenario& scenario, uint64_t seed) {
  Synthesizer synthesizer(scenario, seed);
  std::vector<std::string> lines;
  while (const std::optional<SyntheticRecord> record = synthesizer.Next()) {
    EXPECT_TRUE(record->line.ends_with('\n'));
    EXPECT_EQ(record->line.find('\n'), record->line.size() - 1);
    lines.emplace_back(record->line.substr(0, record->line.size() - 1));
  }
  return lines;
}

std::string Bytes(const Scenario& scenario, uint64_t seed) {
  std::string out;
  for (const std::string& line : Lines(scenario, seed)) out += line + "\n";
  return out;
}

// A scenario with one pairs message of the given fields, `records` records at `rate`.
std::string OneMessage(const std::string& fields, const std::string& names, int records,
                       const std::string& extra = "", const std::string& rate = "4") {
  return "scenario: 1\nstart: 2000-01-01T00:00:00Z\nrate: " + rate + "\nfields:\n" + fields +
         "messages:\n  - {name: m, fields: [" + names +
         "]}\nphases:\n  - {name: one, records: " + std::to_string(records) + "}\n" + extra;
}

// Values of `key=` in pairs lines.
std::vector<std::string> ValuesOf(const std::vector<std::string>& lines, const std::string& key) {
  std::vector<std::string> values;
  for (const std::string& line : lines) {
    const size_t at = line.find(key + "=");
    if (at == std::string::npos || (at > 0 && line[at - 1] != ' ')) continue;
    const size_t begin = at + key.size() + 1;
    values.push_back(line.substr(begin, line.find(' ', begin) - begin));
  }
  return values;
}

constexpr char kDrifting[] =
    "scenario: 1\n"
    "start: 2031-04-01T06:00:00Z\n"
    "rate: 10\n"
    "fields:\n"
    "  at: {kind: time, format: iso, decimals: 1}\n"
    "  dev: {kind: choice, values: {a1: 5, b2: 3, c3: 1}}\n"
    "  temp: {kind: number, range: [-5, 30], distribution: normal, decimals: 1}\n"
    "  hum: {kind: number, range: [20, 90], distribution: walk, step: 2}\n"
    "  rssi: {kind: number, range: [-120, -80]}\n"
    "  id: {kind: token, chars: hex, length: [4, 8]}\n"
    "  code: {kind: choice, values: [E1, E2]}\n"
    "messages:\n"
    "  - {name: reading, weight: 9, fields: [at, dev, temp, hum]}\n"
    "  - {name: ping, weight: 1, layout: csv, fields: [at, dev, id]}\n"
    "phases:\n"
    "  - {name: base, records: 300}\n"
    "  - name: update\n"
    "    records: 300\n"
    "    changes:\n"
    "      - add_field: {message: reading, field: rssi, after: temp}\n"
    "      - retune: {field: temp, decimals: 3}\n"
    "      - retune: {field: hum, format: hex}\n"
    "      - add_message: {name: fault, weight: 2, layout: json, fields: [at, dev, code]}\n";

TEST(Synthesizer, SameSeedGivesTheSameBytes) {
  const Scenario scenario = ParseOk(kDrifting);
  const std::string first = Bytes(scenario, 7);
  EXPECT_EQ(first, Bytes(scenario, 7));
  EXPECT_NE(first, Bytes(scenario, 8));
  EXPECT_EQ(Lines(scenario, 7).size(), 600u);
}

TEST(Synthesizer, ChangesShowFromTheirPhaseOn) {
  const std::vector<std::string> lines = Lines(ParseOk(kDrifting), 3);
  ASSERT_EQ(lines.size(), 600u);
  const std::regex three_decimals(R"( temp=-?\d+\.\d{3} )");
  const std::regex one_decimal(R"( temp=-?\d+\.\d )");
  const std::regex hex_humidity(R"( hum=[0-9a-f]+$)");
  int readings_after = 0;
  int faults_after = 0;
  for (size_t i = 0; i < lines.size(); ++i) {
    const std::string& line = lines[i];
    const bool reading = line.starts_with("at=");
    const bool fault = line.starts_with("{");
    SCOPED_TRACE(line);
    if (i < 300) {
      EXPECT_EQ(line.find("rssi="), std::string::npos);
      EXPECT_FALSE(fault);
      if (reading) {
        EXPECT_TRUE(std::regex_search(line, one_decimal));
      }
      continue;
    }
    if (reading) {
      ++readings_after;
      EXPECT_NE(line.find(" rssi=-"), std::string::npos);
      EXPECT_LT(line.find(" temp="), line.find(" rssi="));  // placed after temp
      EXPECT_TRUE(std::regex_search(line, three_decimals));
      EXPECT_TRUE(std::regex_search(line, hex_humidity));
    }
    faults_after += fault ? 1 : 0;
  }
  // Weights 9 : 1 : 2 over 300 records: about 225 readings and 50 faults.
  EXPECT_GT(readings_after, 150);
  EXPECT_GT(faults_after, 20);
}

TEST(Synthesizer, SkippingToAPhaseGivesTheFullRunsRecords) {
  const Scenario scenario = ParseOk(kDrifting);
  const std::vector<std::string> full = Lines(scenario, 11);
  Synthesizer synthesizer(scenario, 11);
  synthesizer.SkipToPhase(1);
  for (size_t i = 300; i < 600; ++i) {
    const std::optional<SyntheticRecord> record = synthesizer.Next();
    ASSERT_TRUE(record);
    EXPECT_EQ(record->phase, 1u);
    EXPECT_EQ(record->index, i);
    EXPECT_EQ(std::string(record->line), full[i] + "\n");
  }
  EXPECT_FALSE(synthesizer.Next());
}

TEST(Synthesizer, TimeAdvancesByTheRateOfEachPhase) {
  const Scenario scenario =
      ParseOk(OneMessage("  t: {kind: time, format: epoch, decimals: 3}\n"
                         "  u: {kind: time, format: iso, decimals: 2}\n",
                         "t, u", 3,
                         "  - {name: two, records: 2, rate: 0.5, changes: [{reweight: {message: m, "
                         "weight: 2}}]}\n"));
  // 2000-01-01T00:00:00Z is Unix time 946684800 (widely published; from memory).
  EXPECT_EQ(Lines(scenario, 1), (std::vector<std::string>{
                                    "t=946684800.000 u=2000-01-01T00:00:00.00Z",
                                    "t=946684800.250 u=2000-01-01T00:00:00.25Z",
                                    "t=946684800.500 u=2000-01-01T00:00:00.50Z",
                                    "t=946684800.750 u=2000-01-01T00:00:00.75Z",
                                    "t=946684802.750 u=2000-01-01T00:00:02.75Z",
                                }));
  Synthesizer synthesizer(scenario, 1);
  std::vector<std::chrono::nanoseconds> offsets;
  while (const auto record = synthesizer.Next()) offsets.push_back(record->offset);
  EXPECT_EQ(offsets.back(), std::chrono::milliseconds(2750));
}

TEST(Synthesizer, CalendarCrossesLeapDaysAndYears) {
  // 2032 is a leap year (divisible by 4, not by 100), 2100 is not (divisible by 100, not 400):
  // the Gregorian rule.
  auto times = [](const std::string& start) {
    std::string text = OneMessage("  t: {kind: time}\n", "t", 2, "", "1");
    text.replace(text.find("2000-01-01T00:00:00Z"), 20, start);
    return Lines(ParseOk(text), 1);
  };
  EXPECT_EQ(times("2032-02-28T23:59:59Z"),
            (std::vector<std::string>{"t=2032-02-28T23:59:59Z", "t=2032-02-29T00:00:00Z"}));
  EXPECT_EQ(times("2100-02-28T23:59:59Z"),
            (std::vector<std::string>{"t=2100-02-28T23:59:59Z", "t=2100-03-01T00:00:00Z"}));
  EXPECT_EQ(times("2031-12-31T23:59:59Z"),
            (std::vector<std::string>{"t=2031-12-31T23:59:59Z", "t=2032-01-01T00:00:00Z"}));
}

TEST(Synthesizer, LayoutsQuoteWhatNeedsQuoting) {
  const std::string fields =
      "  a: {kind: constant, value: 'x,y'}\n"
      "  b: {kind: constant, value: 'say \"hi\"'}\n"
      "  c: {kind: counter, from: 7}\n"
      "  d: {kind: number, range: [2.5, 2.5], decimals: 2, unit: V}\n"
      "  e: {kind: time, format: epoch_ms}\n";
  std::string csv = OneMessage(fields, "a, b, c, d, e", 1);
  csv.replace(csv.find("{name: m,"), 9, "{name: m, layout: csv,");
  std::string json = OneMessage(fields, "a, b, c, d, e", 1);
  json.replace(json.find("{name: m,"), 9, "{name: m, layout: json,");
  // RFC 4180: fields with commas or quotes are quoted, inner quotes doubled.
  EXPECT_EQ(Lines(ParseOk(csv), 1),
            (std::vector<std::string>{"\"x,y\",\"say \"\"hi\"\"\",7,2.50V,946684800000"}));
  // RFC 8259: quotes escaped with a backslash; plain numbers bare, numbers with a unit quoted.
  EXPECT_EQ(Lines(ParseOk(json), 1),
            (std::vector<std::string>{
                R"({"a":"x,y","b":"say \"hi\"","c":7,"d":"2.50V","e":946684800000})"}));
}

TEST(Synthesizer, NumberFormats) {
  const Scenario scenario =
      ParseOk(OneMessage("  neg: {kind: number, range: [-0.5, -0.5], decimals: 2}\n"
                         "  padded: {kind: number, range: [7.25, 7.25], decimals: 2, pad: 3}\n"
                         "  hex: {kind: number, range: [255, 255], format: hex, pad: 4}\n"
                         "  round: {kind: number, range: [1.15, 1.15], decimals: 2}\n"
                         "  wrap: {kind: counter, from: 4094, wrap: 4096, format: hex, pad: 3}\n"
                         "  down: {kind: counter, from: 1, step: -1}\n",
                         "neg, padded, hex, round, wrap, down", 3));
  EXPECT_EQ(Lines(scenario, 1), (std::vector<std::string>{
                                    "neg=-0.50 padded=007.25 hex=00ff round=1.15 wrap=ffe down=1",
                                    "neg=-0.50 padded=007.25 hex=00ff round=1.15 wrap=fff down=0",
                                    "neg=-0.50 padded=007.25 hex=00ff round=1.15 wrap=000 down=-1",
                                }));
}

TEST(Synthesizer, ValuesStayOnTheirGridAndInRange) {
  const Scenario scenario = ParseOk(OneMessage(
      "  u: {kind: number, range: [-3.5, 12.25], decimals: 2}\n"
      "  n: {kind: number, range: [10, 20], distribution: normal, mean: 19, sd: 4, decimals: 1}\n"
      "  w: {kind: number, range: [0, 1], distribution: walk, step: 0.4, decimals: 3}\n"
      "  k: {kind: token, chars: upper, length: [2, 5]}\n",
      "u, n, w, k", 5000));
  const std::vector<std::string> lines = Lines(scenario, 5);
  const std::regex two_decimals(R"(-?\d+\.\d\d)");
  const std::regex one_decimal(R"(\d+\.\d)");
  const std::regex three_decimals(R"(\d\.\d{3})");
  const std::regex token("[A-Z]{2,5}");
  std::vector<double> walk;
  for (const std::string& u : ValuesOf(lines, "u")) {
    ASSERT_TRUE(std::regex_match(u, two_decimals)) << u;
    ASSERT_GE(std::stod(u), -3.5);
    ASSERT_LE(std::stod(u), 12.25);
  }
  for (const std::string& n : ValuesOf(lines, "n")) {
    ASSERT_TRUE(std::regex_match(n, one_decimal)) << n;
    ASSERT_GE(std::stod(n), 10);
    ASSERT_LE(std::stod(n), 20);
  }
  for (const std::string& w : ValuesOf(lines, "w")) {
    ASSERT_TRUE(std::regex_match(w, three_decimals)) << w;
    walk.push_back(std::stod(w));
  }
  for (const std::string& k : ValuesOf(lines, "k")) ASSERT_TRUE(std::regex_match(k, token)) << k;
  ASSERT_EQ(walk.size(), 5000u);
  EXPECT_EQ(walk[0], 0.5);  // a walk starts at its mean, by default the middle of the range
  for (size_t i = 1; i < walk.size(); ++i) {
    ASSERT_GE(walk[i], 0);
    ASSERT_LE(walk[i], 1);
    // A step moves at most 0.4; rounding to 3 decimals adds at most 0.0005 at each end.
    ASSERT_LE(std::fabs(walk[i] - walk[i - 1]), 0.4 + 0.001);
  }
}

TEST(Synthesizer, WeightsThreeToOne) {
  const Scenario scenario =
      ParseOk(OneMessage("  c: {kind: choice, values: {a: 3, b: 1}}\n", "c", 100000));
  const std::vector<std::string> values = ValuesOf(Lines(scenario, 1), "c");
  ASSERT_EQ(values.size(), 100000u);
  const double share = static_cast<double>(std::count(values.begin(), values.end(), "a")) / 1e5;
  // Binomial standard error sqrt(p (1 - p) / n) with p = 0.75.
  const double standard_error = std::sqrt(0.75 * 0.25 / 1e5);
  EXPECT_NEAR(share, 0.75, 5 * standard_error);
}

TEST(Synthesizer, MessageWeightsThreeToOne) {
  const Scenario scenario = ParseOk(
      "scenario: 1\nfields:\n  x: {kind: constant, value: x}\n  y: {kind: constant, value: y}\n"
      "messages:\n  - {name: mx, weight: 3, fields: [x]}\n  - {name: my, weight: 1, fields: "
      "[y]}\nphases:\n  - {name: one, records: 100000}\n");
  const std::vector<std::string> lines = Lines(scenario, 2);
  const double share = static_cast<double>(std::count(lines.begin(), lines.end(), "x=x")) / 1e5;
  EXPECT_NEAR(share, 0.75, 5 * std::sqrt(0.75 * 0.25 / 1e5));
}

TEST(Synthesizer, UniformIntegersAreEquallyLikely) {
  const Scenario scenario = ParseOk(OneMessage("  d: {kind: number, range: [1, 6]}\n", "d", 60000));
  std::map<std::string, int> counts;
  for (const std::string& d : ValuesOf(Lines(scenario, 9), "d")) ++counts[d];
  ASSERT_EQ(counts.size(), 6u);  // both ends of the range are drawn
  const double standard_error = std::sqrt((1.0 / 6) * (5.0 / 6) / 60000);
  for (const auto& [face, count] : counts) {
    EXPECT_NEAR(count / 60000.0, 1.0 / 6, 5 * standard_error) << face;
  }
}

TEST(Synthesizer, NormalMeanAndVariance) {
  // The range reaches 50 sd either side, so truncation changes nothing measurable.
  const Scenario scenario = ParseOk(OneMessage(
      "  x: {kind: number, range: [-50, 50], distribution: normal, mean: 0, sd: 1, decimals: "
      "6}\n",
      "x", 100000));
  double sum = 0;
  double squares = 0;
  for (const std::string& x : ValuesOf(Lines(scenario, 4), "x")) {
    sum += std::stod(x);
    squares += std::stod(x) * std::stod(x);
  }
  const double n = 100000;
  const double mean = sum / n;
  const double variance = squares / n - mean * mean;
  // Standard errors of the sample mean (sd / sqrt n) and, for a normal sample, of the sample
  // variance (sd^2 sqrt(2 / n)).
  EXPECT_NEAR(mean, 0, 5 / std::sqrt(n));
  EXPECT_NEAR(variance, 1, 5 * std::sqrt(2 / n));
}

TEST(Synthesizer, TruncatedNormalHasTheHalfNormalMean) {
  // N(0, 1) truncated to [0, 50] is the half-normal: mean sqrt(2 / pi) = 0.7978845608,
  // sd sqrt(1 - 2 / pi) = 0.6028102749 (standard results; from memory).
  const Scenario scenario = ParseOk(OneMessage(
      "  x: {kind: number, range: [0, 50], distribution: normal, mean: 0, sd: 1, decimals: 6}\n",
      "x", 100000));
  double sum = 0;
  for (const std::string& x : ValuesOf(Lines(scenario, 6), "x")) {
    ASSERT_GE(std::stod(x), 0);
    sum += std::stod(x);
  }
  EXPECT_NEAR(sum / 1e5, 0.7978845608, 5 * 0.6028102749 / std::sqrt(1e5));
}

TEST(Sampling, EngineIsTheStandardOne) {
  // The C++ standard ([rand.predef]) fixes the 10000th output of a default-constructed
  // std::mt19937_64: 9981545732273789042. Stable scenario output rests on it.
  std::mt19937_64 engine;
  engine.discard(9999);
  EXPECT_EQ(engine(), 9981545732273789042ull);
}

TEST(Sampling, UniformDrawsStayInTheirRange) {
  std::mt19937_64 engine(5);
  for (int i = 0; i < 10000; ++i) {
    const double u = sampling::Uniform01(engine);
    ASSERT_GE(u, 0.0);
    ASSERT_LT(u, 1.0);
    ASSERT_LT(sampling::UniformIndex(engine, 3), 3u);
  }
  EXPECT_EQ(sampling::UniformIndex(engine, 1), 0u);
}

TEST(Sampling, NormalQuantileMatchesPublishedValues) {
  // NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.6.7.1, critical values of the
  // normal distribution: 1.645 (0.95), 1.960 (0.975), 2.576 (0.995), 3.090 (0.999).
  EXPECT_NEAR(sampling::NormalQuantile(0.95), 1.645, 5e-4);
  EXPECT_NEAR(sampling::NormalQuantile(0.975), 1.960, 5e-4);
  EXPECT_NEAR(sampling::NormalQuantile(0.995), 2.576, 5e-4);
  EXPECT_NEAR(sampling::NormalQuantile(0.999), 3.090, 5e-4);
  // Full precision, from Python 3's statistics.NormalDist().inv_cdf (Wichura's algorithm
  // AS241, an implementation independent of ours).
  EXPECT_NEAR(sampling::NormalQuantile(0.975), 1.9599639845400536, 1e-13);
  EXPECT_NEAR(sampling::NormalQuantile(0.3), -0.5244005127080407, 1e-13);
  EXPECT_NEAR(sampling::NormalQuantile(0.02425), -1.9729610513118845, 1e-13);
  EXPECT_NEAR(sampling::NormalQuantile(1e-10), -6.361340902404056, 1e-11);
  EXPECT_EQ(sampling::NormalQuantile(0.5), 0.0);
  // Symmetry: Φ^-1(1 - p) = -Φ^-1(p).
  EXPECT_NEAR(sampling::NormalQuantile(0.999), -sampling::NormalQuantile(0.001), 1e-12);
  // Φ(1) = 0.8413447460685429 and Φ(-3) = 0.0013498980316301035 (Python 3 statistics.NormalDist
  // cdf; the tables give 0.84134 and 0.00135).
  EXPECT_NEAR(sampling::NormalCdf(1.0), 0.8413447460685429, 1e-15);
  EXPECT_NEAR(sampling::NormalCdf(-3.0), 0.0013498980316301035, 1e-15);
}

TEST(Sampling, WeightedPickNeverPicksBeyondTheEnd) {
  const std::vector<double> weights = {1e-300, 1, 1e-300};
  const sampling::WeightedPick pick(weights);
  std::mt19937_64 engine(1);
  for (int i = 0; i < 10000; ++i) ASSERT_LT(pick.Pick(engine), 3u);
}

}  // namespace
}  // namespace codedrift
