// Field definitions of a scenario ({kind: ..., ...} under fields:) and their retuning by
// phases: the keys are read by scenario_field_keys.cc, then the result is checked as a whole.
#include <algorithm>
#include <array>
#include <cmath>

#include "daemon_config_text.h"
#include "scenario_parser.h"
#include "scenario_text.h"

namespace codedrift::scenario_parse {
namespace {

constexpr double kMaxMagnitude = 1e15;

// Applies every key of `map` except `skip`; reports keys of another kind.
// Applies every key of `map` except `skip`: `key` to the field itself, the others to its
// shape; reports keys of another kind.
bool ApplyKeys(const ConfigMap& map, std::string_view skip, ScenarioField& field,
               ConfigDiagnostics& diagnostics) {
  bool ok = true;
  for (const ConfigEntry& entry : map.entries()) {
    if (entry.key == skip) continue;
    if (entry.key == "key") {
      const std::optional<std::string> key = ReadString(entry, diagnostics);
      if (key && !ValidRecordKey(*key)) {
        ReportValue(entry,
                    QuoteForMessage(*key) +
                        " is not a valid key, expected 1 to 64 characters "
                        "from a-z, A-Z, 0-9, _, - and .",
                    diagnostics);
        ok = false;
      } else if (key) {
        field.key = *key;
      }
      ok = key.has_value() && ok;
      continue;
    }
    const std::optional<bool> applied = ApplyFieldKey(entry, field.shape, diagnostics);
    if (!applied) {
      diagnostics.Report(entry.key_position, "key '" + entry.key + "' does not apply to a " +
                                                 std::string(KindName(field.shape)) +
                                                 " field, expected key or " +
                                                 JoinChoices(FieldKeysOf(field.shape)));
    }
    ok = applied.value_or(false) && ok;
  }
  return ok;
}

// Reports at the first of `keys` present in the map, else at the map.
void ReportAt(const ConfigMap& map, std::initializer_list<std::string_view> keys,
              std::string_view what, ConfigDiagnostics& diagnostics) {
  for (const std::string_view key : keys) {
    if (const ConfigEntry* entry = map.Find(key)) {
      diagnostics.Report(entry->value_position(), entry->key + ": " + std::string(what));
      return;
    }
  }
  diagnostics.Report(map.position(), std::string(what));
}

bool Check(const NumberField& f, const ConfigMap& map, ConfigDiagnostics& d) {
  using scenario_text::NumberText;
  const std::string range = NumberText(f.low) + ".." + NumberText(f.high);
  if (f.low > f.high) {
    ReportAt(map, {"range"},
             "low end " + NumberText(f.low) + " is above high end " + NumberText(f.high) +
                 ", expected [low, high]",
             d);
    return false;
  }
  if (std::max(std::fabs(f.low), std::fabs(f.high)) > kMaxMagnitude ||
      std::max(std::fabs(f.low), std::fabs(f.high)) *
              static_cast<double>(scenario_text::Pow10(f.decimals)) >
          scenario_text::kMaxScaled) {
    ReportAt(map, {"range", "decimals"},
             "range " + range + " with " + std::to_string(f.decimals) +
                 " decimals is too wide, expected magnitude x 10^decimals below 2^53",
             d);
    return false;
  }
  if (!scenario_text::GridOf(f.low, f.high, f.decimals)) {
    ReportAt(map, {"range", "decimals"},
             "range " + range + " holds no number with " + std::to_string(f.decimals) +
                 " decimals, expected a wider range or more decimals",
             d);
    return false;
  }
  if (f.base == NumberBase::kHex && (f.decimals != 0 || f.low < 0)) {
    ReportAt(map, {"format", "decimals", "range"},
             "hex numbers need decimals: 0 and a range that is not negative", d);
    return false;
  }
  if (f.mean && (*f.mean < f.low || *f.mean > f.high)) {
    ReportAt(map, {"mean", "range"}, "mean " + NumberText(*f.mean) + " is outside range " + range,
             d);
    return false;
  }
  if ((f.sd && !(*f.sd > 0)) || (f.step && !(*f.step > 0))) {
    ReportAt(map, {f.sd && !(*f.sd > 0) ? "sd" : "step"}, "expected a number above 0", d);
    return false;
  }
  return true;
}

bool Check(const TokenField& f, const ConfigMap& map, ConfigDiagnostics& d) {
  if (f.min_length < 1 || f.min_length > f.max_length) {
    ReportAt(map, {"length"},
             "expected a length of 1 to 256, or [shortest, longest] with 1 <= "
             "shortest <= longest <= 256",
             d);
    return false;
  }
  return true;
}

bool Check(const CounterField& f, const ConfigMap& map, ConfigDiagnostics& d) {
  if (f.wrap > 0 && (f.from < 0 || static_cast<uint64_t>(f.from) >= f.wrap)) {
    ReportAt(map, {"from", "wrap"},
             "from " + std::to_string(f.from) + " is outside [0, wrap) with wrap " +
                 std::to_string(f.wrap),
             d);
    return false;
  }
  if (f.base == NumberBase::kHex && f.wrap == 0 && (f.from < 0 || f.step < 0)) {
    ReportAt(map, {"format", "from", "step"},
             "a hex counter cannot go negative, expected from >= 0 and step >= 0 (or a wrap)", d);
    return false;
  }
  return true;
}

bool Check(const TimeField& f, const ConfigMap& map, ConfigDiagnostics& d) {
  if (f.style == TimeStyle::kEpochMillis && f.decimals != 0) {
    ReportAt(map, {"decimals", "format"},
             "epoch_ms times are whole milliseconds, expected "
             "decimals: 0",
             d);
    return false;
  }
  return true;
}

bool Check(const ChoiceField& f, const ConfigMap& map, ConfigDiagnostics& d) {
  if (f.values.empty()) {
    ReportAt(map, {"values"}, "missing required key 'values' in a choice field", d);
    return false;
  }
  return true;
}

bool Check(const ConstantField&, const ConfigMap&, ConfigDiagnostics&) { return true; }

bool CheckShape(const FieldShape& shape, const ConfigMap& map, ConfigDiagnostics& diagnostics) {
  return std::visit([&](const auto& field) { return Check(field, map, diagnostics); }, shape);
}

// (attribute, text) pairs that describe a field, in a fixed order, for change descriptions.
using Attributes = std::vector<std::pair<std::string, std::string>>;

std::string Optional(const std::optional<double>& value) {
  return value ? scenario_text::NumberText(*value) : "auto";
}

Attributes AttributesOf(const FieldShape& shape) {
  using scenario_text::NumberText;
  Attributes out;
  if (const auto* f = std::get_if<NumberField>(&shape)) {
    out = {{"range", NumberText(f->low) + ".." + NumberText(f->high)},
           {"distribution", std::string(DistributionName(f->distribution))},
           {"mean", Optional(f->mean)},
           {"sd", Optional(f->sd)},
           {"step", Optional(f->step)},
           {"decimals", std::to_string(f->decimals)},
           {"format", std::string(NumberBaseName(f->base))},
           {"pad", std::to_string(f->pad)},
           {"unit", f->unit.empty() ? "none" : QuoteForMessage(f->unit)}};
  } else if (const auto* f = std::get_if<ChoiceField>(&shape)) {
    std::string values;
    for (size_t i = 0; i < f->values.size(); ++i) {
      if (i > 0) values += ' ';
      values += f->values[i] + ":" + NumberText(f->weights[i]);
    }
    out = {{"values", values}};
  } else if (const auto* f = std::get_if<TokenField>(&shape)) {
    out = {{"chars", f->set_name},
           {"length", f->min_length == f->max_length
                          ? std::to_string(f->min_length)
                          : std::to_string(f->min_length) + ".." + std::to_string(f->max_length)}};
  } else if (const auto* f = std::get_if<CounterField>(&shape)) {
    out = {{"from", std::to_string(f->from)},
           {"step", std::to_string(f->step)},
           {"wrap", f->wrap == 0 ? "none" : std::to_string(f->wrap)},
           {"format", std::string(NumberBaseName(f->base))},
           {"pad", std::to_string(f->pad)}};
  } else if (const auto* f = std::get_if<TimeField>(&shape)) {
    out = {{"format", std::string(TimeStyleName(f->style))},
           {"decimals", std::to_string(f->decimals)}};
  } else if (const auto* f = std::get_if<ConstantField>(&shape)) {
    out = {{"value", QuoteForMessage(f->value)}};
  }
  return out;
}

// Every key any kind takes, plus `kind`: the mapping is opened with these so that a typo gets a
// did-you-mean, and a real key of another kind gets "does not apply".
constexpr std::array<std::string_view, 18> kAnyFieldKeys = {
    "kind", "key",  "range",  "distribution", "mean",   "sd",   "step", "decimals", "format",
    "pad",  "unit", "values", "chars",        "length", "from", "wrap", "value",    "field"};

}  // namespace

std::string_view KindName(const FieldShape& shape) { return FieldKindNames()[shape.index()]; }

bool ValidRecordKey(std::string_view key) {
  return !key.empty() && key.size() <= 64 && std::all_of(key.begin(), key.end(), [](char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' ||
           c == '-' || c == '.';
  });
}

std::optional<ScenarioField> ReadFieldDefinition(const ConfigEntry& entry, std::string_view name,
                                                 ConfigDiagnostics& diagnostics) {
  const std::span<const std::string_view> allowed(kAnyFieldKeys.data(), kAnyFieldKeys.size() - 1);
  const std::optional<ConfigMap> map =
      ConfigMap::Open(entry, "field '" + std::string(name) + "'", allowed, diagnostics);
  if (!map) return std::nullopt;
  const ConfigEntry* kind_entry = map->Require("kind", diagnostics);
  if (kind_entry == nullptr) return std::nullopt;
  const std::optional<size_t> kind = ReadChoice(*kind_entry, FieldKindNames(), diagnostics);
  if (!kind) return std::nullopt;
  ScenarioField field{std::string(name), std::string(name), DefaultFieldShape(*kind)};
  if (!ApplyKeys(*map, "kind", field, diagnostics)) return std::nullopt;
  if (std::holds_alternative<NumberField>(field.shape) &&
      map->Require("range", diagnostics) == nullptr) {
    return std::nullopt;
  }
  if (std::holds_alternative<ConstantField>(field.shape) &&
      map->Require("value", diagnostics) == nullptr) {
    return std::nullopt;
  }
  if (!CheckShape(field.shape, *map, diagnostics)) return std::nullopt;
  return field;
}

bool RetuneField(const ConfigMap& map, ScenarioField& field, ConfigDiagnostics& diagnostics) {
  if (const ConfigEntry* kind = map.Find("kind")) {
    diagnostics.Report(kind->key_position,
                       "a field keeps its kind (" + field.name + " is a " +
                           std::string(KindName(field.shape)) +
                           " field), expected a new field added with add_field");
    return false;
  }
  if (map.entries().size() < 2) {
    diagnostics.Report(map.position(), "retune of " + field.name +
                                           " changes nothing, expected some of key, " +
                                           JoinChoices(FieldKeysOf(field.shape)));
    return false;
  }
  return ApplyKeys(map, "field", field, diagnostics) && CheckShape(field.shape, map, diagnostics);
}

std::string DescribeFieldChange(const ScenarioField& before, const ScenarioField& after) {
  Attributes old_attributes = AttributesOf(before.shape);
  Attributes new_attributes = AttributesOf(after.shape);
  old_attributes.insert(old_attributes.begin(), {"key", before.key});
  new_attributes.insert(new_attributes.begin(), {"key", after.key});
  std::string out;
  for (size_t i = 0; i < old_attributes.size() && i < new_attributes.size(); ++i) {
    if (old_attributes[i].second == new_attributes[i].second) continue;
    if (!out.empty()) out += ", ";
    out += old_attributes[i].first + " " + old_attributes[i].second + " -> " +
           new_attributes[i].second;
  }
  return out;
}

std::span<const std::string_view> RetuneKeys() { return kAnyFieldKeys; }

}  // namespace codedrift::scenario_parse
