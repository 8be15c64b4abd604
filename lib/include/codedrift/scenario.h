// Traffic scenarios for `codedrift synth`: a YAML file (our own format, below) describing
// record templates and the phases that change them over simulated time, and the Synthesizer
// that turns a scenario and a seed into the same records, byte for byte, on every run.
//
// Scenario file (version 1). Unknown keys are errors with a did-you-mean; every error reads
// "file:line:column: reason".
//
//   scenario: 1                       # format version
//   title: Soil probes of a cooperative   # optional, shown by --list
//   start: 2031-04-01T06:00:00Z       # simulated UTC time of the first record (optional)
//   rate: 4                           # records per simulated second; phases may override
//   fields:                           # every field any message ever uses, by name
//     at:    {kind: time, format: iso}                 # iso | epoch | epoch_ms; decimals 0..3
//     probe: {kind: choice, values: {p01: 3, p02: 1}}  # weights; or a list (equal weights)
//     vwc:   {kind: number, range: [8, 42], distribution: normal, decimals: 1}
//            # distribution uniform | normal (mean, sd; truncated to the range) |
//            # walk (mean = start, step = largest move per record); decimals 0..6;
//            # format decimal | hex (decimals 0, range >= 0); pad: minimum digits; unit: suffix
//     seq:   {kind: counter, from: 0, step: 1, wrap: 65536, format: decimal, pad: 0}
//     msgid: {kind: token, chars: hex, length: 8}      # chars hex|digits|lower|upper|alnum;
//                                                      # length N or [min, max]
//     tag:   {kind: constant, value: SOIL, key: type}  # key: the name written in records
//                                                      # (default: the field's name)
//   messages:                         # message types, picked per record by weight
//     - {name: reading, weight: 20, layout: pairs, fields: [at, probe, vwc]}
//   phases:                           # played in order; each lasts `records` or `duration`
//     - {name: baseline, records: 20000}
//     - name: firmware-3
//       duration: 10m                 # records = duration x rate
//       rate: 8
//       changes:                      # applied when the phase starts, kept afterwards
//         - add_field: {message: reading, field: seq, after: probe}   # or before:, or the end
//         - remove_field: {message: reading, field: vwc}
//         - add_message: {name: alarm, weight: 1, layout: csv, fields: [at, probe, tag]}
//         - remove_message: {message: alarm}
//         - reweight: {message: reading, weight: 5}
//         - retune: {field: vwc, range: [5, 30], decimals: 3}  # key, or keys of its kind
//
// Layouts: `pairs` writes "name=value" separated by spaces, `csv` the values separated by
// commas (RFC 4180 quoting when needed), `json` one object per line (numbers bare when they
// are plain decimals, everything else a string). Every record ends with '\n'.
#pragma once

#include <chrono>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <random>
#include <string>
#include <string_view>
#include <variant>
#include <vector>

#include "codedrift/result.h"
#include "codedrift/scenario_sampling.h"

namespace codedrift {

enum class Distribution { kUniform, kNormal, kWalk };
enum class NumberBase { kDecimal, kHex };
enum class TimeStyle { kIso, kEpoch, kEpochMillis };
enum class RecordLayout { kPairs, kCsv, kJson };

// A number drawn from [low, high] and written with `decimals` digits after the point (every
// value lies on that grid: uniform draws pick grid points with equal probability).
struct NumberField {
  double low = 0;
  double high = 0;
  Distribution distribution = Distribution::kUniform;
  // Unset: derived from the range (mean: its middle; sd: a sixth of its width; step: a
  // twentieth of its width), so a retuned range moves them too.
  std::optional<double> mean;  // normal: centre (before truncation); walk: first value
  std::optional<double> sd;    // normal
  std::optional<double> step;  // walk: a record moves the value by at most this much
  int decimals = 0;
  NumberBase base = NumberBase::kDecimal;
  int pad = 0;  // minimum digits before the point (hex: minimum digits), zero-filled
  std::string unit;

  double Mean() const { return mean.value_or((low + high) / 2); }
  double Sd() const { return sd.value_or((high - low) / 6); }
  double Step() const { return step.value_or((high - low) / 20); }
};

// One of `values`, with probability proportional to its weight.
struct ChoiceField {
  std::vector<std::string> values;
  std::vector<double> weights;  // > 0, same size as values
};

// A free token: `min_length`..`max_length` characters drawn uniformly from `chars`.
struct TokenField {
  std::string set_name;  // hex | digits | lower | upper | alnum
  std::string chars;
  int min_length = 8;
  int max_length = 8;
};

// from, from + step, ...; with wrap W > 0 the value is kept in [0, W).
struct CounterField {
  int64_t from = 0;
  int64_t step = 1;
  uint64_t wrap = 0;
  NumberBase base = NumberBase::kDecimal;
  int pad = 0;
};

// The record's simulated time.
struct TimeField {
  TimeStyle style = TimeStyle::kIso;
  int decimals = 0;  // digits of the second: iso and epoch 0..3; epoch_ms 0
};

struct ConstantField {
  std::string value;
};

using FieldShape =
    std::variant<NumberField, ChoiceField, TokenField, CounterField, TimeField, ConstantField>;

struct ScenarioField {
  std::string name;  // how messages and changes refer to it
  std::string key;   // how records name it (pairs, json): `key:` if given, else the name
  FieldShape shape;
};

struct ScenarioMessage {
  std::string name;
  double weight = 1;
  RecordLayout layout = RecordLayout::kPairs;
  std::vector<size_t> fields;  // indexes into ScenarioPhase::fields, in output order
};

// One phase with everything as it stands while it plays (earlier changes included), so a
// phase can be generated without replaying the edits that led to it.
struct ScenarioPhase {
  std::string name;
  uint64_t records = 0;
  double rate = 1;                    // records per simulated second
  std::chrono::nanoseconds start{0};  // simulated time of its first record, from the start
  std::vector<ScenarioField> fields;  // every field of the scenario, same order in every phase
  std::vector<ScenarioMessage> messages;
  std::vector<std::string> changes;  // what this phase changes, one sentence each, for --list

  // Simulated time from this phase's start to record `index` of it.
  std::chrono::nanoseconds OffsetOf(uint64_t index) const;
  std::chrono::nanoseconds Duration() const { return OffsetOf(records); }
};

// A parsed scenario. Plain value type.
struct Scenario {
  std::string title;
  int64_t start_unix_seconds = 0;
  std::vector<ScenarioPhase> phases;  // at least one

  uint64_t TotalRecords() const;
  std::optional<size_t> FindPhase(std::string_view name) const;
};

// Parses and validates a scenario. Errors list every problem found, one per line, each
// "file:line:column: reason".
Result<Scenario> ParseScenario(std::string_view yaml_text, std::string_view file_name);
Result<Scenario> LoadScenario(const std::string& path);

// "2031-04-01T06:00:00Z", with `decimals` (0..9) digits of the second.
std::string FormatUtc(int64_t unix_seconds, std::chrono::nanoseconds since, int decimals);
// Compact simulated durations: "0s", "250ms", "2.5s", "16m40s", "1h23m20s", "2d3h".
std::string FormatSimulatedDuration(std::chrono::nanoseconds duration);

// One generated record. `line` points into the Synthesizer and stays valid until the next
// call to Next.
struct SyntheticRecord {
  std::string_view line;  // ends with '\n'
  size_t phase = 0;
  uint64_t index = 0;                  // 0-based over the whole scenario
  std::chrono::nanoseconds offset{0};  // simulated time since the scenario's start
};

// Plays a scenario: the same scenario and seed give the same records on every platform and
// standard library (std::mt19937_64 is fully specified; the samplers are our own). Owns a copy
// of the scenario. Not thread-safe; one instance per output.
class Synthesizer {
 public:
  Synthesizer(Scenario scenario, uint64_t seed);

  // The next record, or nullopt when every phase has played.
  std::optional<SyntheticRecord> Next();
  // Generates and discards records up to the first of phase `phase` (later than the current
  // position only), so what follows is exactly what a full run emits from there.
  void SkipToPhase(size_t phase);

  const Scenario& scenario() const { return scenario_; }

 private:
  // What a field carries from record to record, across phases.
  struct FieldState {
    std::optional<double> walk;
    std::optional<int64_t> counter;
  };
  // Samplers of the current phase, built when it starts.
  struct FieldSamplers {
    std::optional<sampling::WeightedPick> choice;
    std::optional<sampling::TruncatedNormal> normal;
  };
  void EnterPhase(size_t phase);
  // Writes field `field`'s next value into value_.
  void DrawValue(size_t field);
  void DrawNumber(const NumberField& number, size_t field);

  Scenario scenario_;
  std::mt19937_64 engine_;
  std::vector<FieldState> state_;
  std::vector<FieldSamplers> samplers_;
  std::optional<sampling::WeightedPick> message_pick_;
  size_t phase_ = 0;
  uint64_t in_phase_ = 0;  // records already produced in the current phase
  uint64_t index_ = 0;
  std::chrono::nanoseconds now_{0};
  std::string line_;
  std::string value_;
};

}  // namespace codedrift
