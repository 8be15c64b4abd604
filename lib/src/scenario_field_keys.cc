// The keys of field definitions, kind by kind: each reader sets one key of one kind, so the
// same code defines a field (fields:) and retunes it (a phase's retune).
#include <algorithm>
#include <array>
#include <charconv>
#include <cmath>

#include "daemon_config_text.h"
#include "scenario_parser.h"
#include "scenario_text.h"

namespace codedrift::scenario_parse {
namespace {
constexpr std::array<std::string_view, 6> kKinds = {"number",  "choice", "token",
                                                    "counter", "time",   "constant"};
constexpr std::array<std::string_view, 3> kDistributions = {"uniform", "normal", "walk"};
constexpr std::array<std::string_view, 2> kBases = {"decimal", "hex"};
constexpr std::array<std::string_view, 3> kTimeStyles = {"iso", "epoch", "epoch_ms"};
constexpr std::array<std::string_view, 5> kCharSets = {"hex", "digits", "lower", "upper", "alnum"};
constexpr std::array<std::string_view, 5> kCharSetChars = {
    "0123456789abcdef", "0123456789", "abcdefghijklmnopqrstuvwxyz", "ABCDEFGHIJKLMNOPQRSTUVWXYZ",
    "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz"};

// Keys each kind takes, in kKinds order.
constexpr std::array<std::string_view, 9> kNumberKeys = {
    "range", "distribution", "mean", "sd", "step", "decimals", "format", "pad", "unit"};
constexpr std::array<std::string_view, 1> kChoiceKeys = {"values"};
constexpr std::array<std::string_view, 2> kTokenKeys = {"chars", "length"};
constexpr std::array<std::string_view, 5> kCounterKeys = {"from", "step", "wrap", "format", "pad"};
constexpr std::array<std::string_view, 2> kTimeKeys = {"format", "decimals"};
constexpr std::array<std::string_view, 1> kConstantKeys = {"value"};

constexpr int kMaxPad = 32;
constexpr int kMaxTokenLength = 256;
constexpr size_t kMaxChoiceValues = 65536;
constexpr size_t kMaxTextBytes = 256;

std::string Shown(const YAML::Node& node) {
  if (node.IsScalar()) return QuoteForMessage(node.Scalar());
  if (node.IsSequence()) return "a list";
  if (node.IsMap()) return "a mapping";
  return "nothing";
}

// Text a value may hold: short, no line breaks (every record is one line).
std::optional<std::string> ReadText(const ConfigEntry& entry, ConfigDiagnostics& diagnostics) {
  std::optional<std::string> text = ReadString(entry, diagnostics);
  if (text && (text->size() > kMaxTextBytes || text->find_first_of("\r\n") != std::string::npos)) {
    ReportValue(entry, "expected text of at most 256 bytes on one line", diagnostics);
    return std::nullopt;
  }
  return text;
}

std::optional<int> ReadSmall(const ConfigEntry& entry, int max, ConfigDiagnostics& diagnostics) {
  const std::optional<uint64_t> value =
      ReadInteger(entry, 0, static_cast<uint64_t>(max), diagnostics);
  if (!value) return std::nullopt;
  return static_cast<int>(*value);
}

bool ReadRange(const ConfigEntry& entry, NumberField& number, ConfigDiagnostics& diagnostics) {
  if (!entry.value.IsSequence() || entry.value.size() != 2) {
    ReportValue(entry, "expected [low, high], two numbers", diagnostics);
    return false;
  }
  std::optional<std::vector<ConfigEntry>> items = ReadList(entry, diagnostics);
  const std::optional<double> low = ReadNumber((*items)[0], diagnostics);
  const std::optional<double> high = ReadNumber((*items)[1], diagnostics);
  if (!low || !high) return false;
  number.low = *low;
  number.high = *high;
  return true;
}

bool ReadChoiceValues(const ConfigEntry& entry, ChoiceField& choice,
                      ConfigDiagnostics& diagnostics) {
  choice.values.clear();
  choice.weights.clear();
  const bool weighted = entry.value.IsMap();
  if (!weighted && !entry.value.IsSequence()) {
    ReportValue(entry, "expected a list of values or a mapping of value: weight", diagnostics);
    return false;
  }
  if (entry.value.size() == 0 || entry.value.size() > kMaxChoiceValues) {
    ReportValue(entry, "expected 1 to 65536 values", diagnostics);
    return false;
  }
  bool ok = true;
  auto add = [&](const ConfigEntry& item, double weight) {
    std::optional<std::string> value = ReadText(item, diagnostics);
    if (!value) return false;
    if (std::find(choice.values.begin(), choice.values.end(), *value) != choice.values.end()) {
      ReportValue(item, "the value " + QuoteForMessage(*value) + " is listed twice", diagnostics);
      return false;
    }
    choice.values.push_back(std::move(*value));
    choice.weights.push_back(weight);
    return true;
  };
  if (weighted) {
    for (auto it = entry.value.begin(); it != entry.value.end(); ++it) {
      const ConfigEntry key{entry.key, PositionOf(it->first), it->first};
      const std::string shown = it->first.IsScalar() ? it->first.Scalar() : std::string("?");
      const ConfigEntry weight_entry{"weight of " + QuoteForMessage(shown), PositionOf(it->first),
                                     it->second};
      const std::optional<double> weight = ReadPositive(weight_entry, 1e15, diagnostics);
      ok = weight && add(key, *weight) && ok;
    }
  } else {
    const std::vector<ConfigEntry> items =
        ReadList(entry, diagnostics).value_or(std::vector<ConfigEntry>());
    for (const ConfigEntry& item : items) ok = add(item, 1) && ok;
  }
  return ok;
}

bool ReadTokenLength(const ConfigEntry& entry, TokenField& token, ConfigDiagnostics& diagnostics) {
  if (entry.value.IsSequence()) {
    if (entry.value.size() != 2) {
      ReportValue(entry, "expected a length or [shortest, longest]", diagnostics);
      return false;
    }
    const std::vector<ConfigEntry> items = *ReadList(entry, diagnostics);
    const std::optional<int> shortest = ReadSmall(items[0], kMaxTokenLength, diagnostics);
    const std::optional<int> longest = ReadSmall(items[1], kMaxTokenLength, diagnostics);
    if (!shortest || !longest) return false;
    token.min_length = *shortest;
    token.max_length = *longest;
    return true;
  }
  const std::optional<int> length = ReadSmall(entry, kMaxTokenLength, diagnostics);
  if (!length) return false;
  token.min_length = token.max_length = *length;
  return true;
}

// Each returns nullopt when the key is not one of the kind's, else whether it read well.
std::optional<bool> ApplyKey(const ConfigEntry& e, NumberField& f, ConfigDiagnostics& d) {
  if (e.key == "range") return ReadRange(e, f, d);
  if (e.key == "distribution") {
    const std::optional<size_t> i = ReadChoice(e, kDistributions, d);
    if (i) f.distribution = static_cast<Distribution>(*i);
    return i.has_value();
  }
  if (e.key == "mean" || e.key == "sd" || e.key == "step") {
    const std::optional<double> value = ReadNumber(e, d);
    (e.key == "mean" ? f.mean : e.key == "sd" ? f.sd : f.step) = value;
    return value.has_value();
  }
  if (e.key == "decimals" || e.key == "pad") {
    const std::optional<int> value =
        ReadSmall(e, e.key == "pad" ? kMaxPad : scenario_text::kMaxDecimals, d);
    if (value) (e.key == "pad" ? f.pad : f.decimals) = *value;
    return value.has_value();
  }
  if (e.key == "format") {
    const std::optional<size_t> i = ReadChoice(e, kBases, d);
    if (i) f.base = static_cast<NumberBase>(*i);
    return i.has_value();
  }
  if (e.key == "unit") {
    std::optional<std::string> unit = ReadText(e, d);
    if (unit) f.unit = std::move(*unit);
    return unit.has_value();
  }
  return std::nullopt;
}

std::optional<bool> ApplyKey(const ConfigEntry& e, ChoiceField& f, ConfigDiagnostics& d) {
  if (e.key == "values") return ReadChoiceValues(e, f, d);
  return std::nullopt;
}

std::optional<bool> ApplyKey(const ConfigEntry& e, TokenField& f, ConfigDiagnostics& d) {
  if (e.key == "chars") {
    const std::optional<size_t> i = ReadChoice(e, kCharSets, d);
    if (i) {
      f.set_name = kCharSets[*i];
      f.chars = kCharSetChars[*i];
    }
    return i.has_value();
  }
  if (e.key == "length") return ReadTokenLength(e, f, d);
  return std::nullopt;
}

std::optional<bool> ApplyKey(const ConfigEntry& e, CounterField& f, ConfigDiagnostics& d) {
  constexpr int64_t kLimit = int64_t{1} << 52;
  if (e.key == "from" || e.key == "step") {
    const std::optional<int64_t> value = ReadSigned(e, -kLimit, kLimit, d);
    if (value) (e.key == "from" ? f.from : f.step) = *value;
    return value.has_value();
  }
  if (e.key == "wrap") {
    const std::optional<uint64_t> value = ReadInteger(e, 0, uint64_t{1} << 52, d);
    if (value) f.wrap = *value;
    return value.has_value();
  }
  if (e.key == "format") {
    const std::optional<size_t> i = ReadChoice(e, kBases, d);
    if (i) f.base = static_cast<NumberBase>(*i);
    return i.has_value();
  }
  if (e.key == "pad") {
    const std::optional<int> value = ReadSmall(e, kMaxPad, d);
    if (value) f.pad = *value;
    return value.has_value();
  }
  return std::nullopt;
}

std::optional<bool> ApplyKey(const ConfigEntry& e, TimeField& f, ConfigDiagnostics& d) {
  if (e.key == "format") {
    const std::optional<size_t> i = ReadChoice(e, kTimeStyles, d);
    if (i) f.style = static_cast<TimeStyle>(*i);
    return i.has_value();
  }
  if (e.key == "decimals") {
    const std::optional<int> value = ReadSmall(e, 3, d);
    if (value) f.decimals = *value;
    return value.has_value();
  }
  return std::nullopt;
}

std::optional<bool> ApplyKey(const ConfigEntry& e, ConstantField& f, ConfigDiagnostics& d) {
  if (e.key == "value") {
    std::optional<std::string> value = ReadText(e, d);
    if (value) f.value = std::move(*value);
    return value.has_value();
  }
  return std::nullopt;
}
}  // namespace

std::span<const std::string_view> FieldKindNames() { return kKinds; }
std::string_view DistributionName(Distribution d) { return kDistributions[static_cast<size_t>(d)]; }
std::string_view NumberBaseName(NumberBase b) { return kBases[static_cast<size_t>(b)]; }
std::string_view TimeStyleName(TimeStyle s) { return kTimeStyles[static_cast<size_t>(s)]; }

std::span<const std::string_view> FieldKeysOf(const FieldShape& shape) {
  switch (shape.index()) {
    case 0:
      return kNumberKeys;
    case 1:
      return kChoiceKeys;
    case 2:
      return kTokenKeys;
    case 3:
      return kCounterKeys;
    case 4:
      return kTimeKeys;
    default:
      return kConstantKeys;
  }
}

FieldShape DefaultFieldShape(size_t kind) {
  switch (kind) {
    case 0:
      return NumberField{};
    case 1:
      return ChoiceField{};
    case 2:
      return TokenField{"hex", std::string(kCharSetChars[0]), 8, 8};
    case 3:
      return CounterField{};
    case 4:
      return TimeField{};
    default:
      return ConstantField{};
  }
}

std::optional<bool> ApplyFieldKey(const ConfigEntry& entry, FieldShape& shape,
                                  ConfigDiagnostics& diagnostics) {
  return std::visit([&](auto& field) { return ApplyKey(entry, field, diagnostics); }, shape);
}

std::optional<double> ReadNumber(const ConfigEntry& entry, ConfigDiagnostics& diagnostics) {
  const bool plain = entry.value.IsScalar() && entry.value.Tag() != "!";
  const std::string text = entry.value.IsScalar() ? entry.value.Scalar() : std::string();
  double value = 0;
  const char* end = text.data() + text.size();
  const auto [parsed_end, ec] = std::from_chars(text.data(), end, value);
  if (!plain || text.empty() || ec != std::errc() || parsed_end != end || !std::isfinite(value)) {
    ReportValue(entry, "expected a number, got " + Shown(entry.value), diagnostics);
    return std::nullopt;
  }
  return value;
}

std::optional<int64_t> ReadSigned(const ConfigEntry& entry, int64_t min, int64_t max,
                                  ConfigDiagnostics& diagnostics) {
  const bool plain = entry.value.IsScalar() && entry.value.Tag() != "!";
  const std::string text = entry.value.IsScalar() ? entry.value.Scalar() : std::string();
  int64_t value = 0;
  const char* end = text.data() + text.size();
  const auto [parsed_end, ec] = std::from_chars(text.data(), end, value);
  if (!plain || text.empty() || ec != std::errc() || parsed_end != end || value < min ||
      value > max) {
    ReportValue(entry,
                "expected a whole number " + std::to_string(min) + ".." + std::to_string(max) +
                    ", got " + Shown(entry.value),
                diagnostics);
    return std::nullopt;
  }
  return value;
}

std::optional<double> ReadPositive(const ConfigEntry& entry, double max,
                                   ConfigDiagnostics& diagnostics) {
  const std::optional<double> value = ReadNumber(entry, diagnostics);
  if (value && !(*value > 0 && *value <= max)) {
    ReportValue(entry,
                scenario_text::NumberText(*value) +
                    " is out of range, expected a number above 0 "
                    "and at most " +
                    scenario_text::NumberText(max),
                diagnostics);
    return std::nullopt;
  }
  return value;
}

}  // namespace codedrift::scenario_parse
