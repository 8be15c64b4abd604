// The scenario draft: the fields: section, message types, and name lookups with did-you-mean.
#include <algorithm>
#include <array>

#include "daemon_config_text.h"
#include "scenario_parser.h"

namespace codedrift::scenario_parse {
namespace {

constexpr std::array<std::string_view, 4> kMessageKeys = {"name", "weight", "layout", "fields"};
constexpr std::array<std::string_view, 3> kLayouts = {"pairs", "csv", "json"};
constexpr size_t kMaxFields = 256;
constexpr size_t kMaxMessages = 256;
constexpr double kMaxWeight = 1e15;

std::string UnknownName(std::string_view what, const std::string& name,
                        std::span<const std::string_view> known, std::string_view otherwise) {
  std::string message = std::string(what) + " " + QuoteForMessage(name);
  if (std::string_view match = ClosestMatch(name, known); !match.empty()) {
    message += " (did you mean '" + std::string(match) + "'?)";
  } else {
    message += std::string(otherwise);
  }
  return message;
}

}  // namespace

std::string_view LayoutName(RecordLayout layout) { return kLayouts[static_cast<size_t>(layout)]; }

bool ScenarioDraft::ReadFields(const ConfigEntry& entry) {
  if (!entry.value.IsMap() || entry.value.size() == 0 || entry.value.size() > kMaxFields) {
    ReportValue(entry, "expected a mapping of 1 to 256 fields, name: {kind: ...}", d_);
    return false;
  }
  bool ok = true;
  for (auto it = entry.value.begin(); it != entry.value.end(); ++it) {
    const SourcePosition at = PositionOf(it->first);
    const std::string name = it->first.IsScalar() ? it->first.Scalar() : std::string();
    if (!ValidRecordKey(name)) {
      d_.Report(at, "field name " + QuoteForMessage(name) +
                        " is not valid, expected 1 to 64 characters from a-z, A-Z, 0-9, _, - "
                        "and .");
      ok = false;
      continue;
    }
    if (FindField(name)) {
      d_.Report(at, "field '" + name + "' is defined twice");
      ok = false;
      continue;
    }
    std::optional<ScenarioField> field = ReadFieldDefinition({name, at, it->second}, name, d_);
    ok = field.has_value() && ok;
    // Keep the name even when its definition failed, so that the messages naming it are not
    // reported as well.
    fields_.push_back(field.value_or(ScenarioField{name, name, ConstantField{}}));
  }
  return ok;
}

std::optional<ScenarioMessage> ScenarioDraft::ReadMessage(const ConfigEntry& entry,
                                                          std::string_view section) {
  const std::optional<ConfigMap> map = ConfigMap::Open(entry, section, kMessageKeys, d_);
  if (!map) return std::nullopt;
  ScenarioMessage message;
  bool ok = true;
  if (const ConfigEntry* e = map->Require("name", d_)) {
    const std::optional<std::string> name = ReadName(*e, d_);
    if (name) message.name = *name;
    ok = name.has_value() && ok;
  } else {
    ok = false;
  }
  if (const ConfigEntry* e = map->Find("weight")) {
    const std::optional<double> weight = ReadPositive(*e, kMaxWeight, d_);
    if (weight) message.weight = *weight;
    ok = weight.has_value() && ok;
  }
  if (const ConfigEntry* e = map->Find("layout")) {
    const std::optional<size_t> layout = ReadChoice(*e, kLayouts, d_);
    if (layout) message.layout = static_cast<RecordLayout>(*layout);
    ok = layout.has_value() && ok;
  }
  if (const ConfigEntry* e = map->Require("fields", d_)) {
    std::optional<std::vector<size_t>> fields = ReadFieldList(*e);
    if (fields) message.fields = std::move(*fields);
    ok = fields.has_value() && ok;
  } else {
    ok = false;
  }
  if (!ok) return std::nullopt;
  return message;
}

bool ScenarioDraft::AddMessage(ScenarioMessage message, const ConfigEntry& entry) {
  if (FindMessage(message.name) != nullptr) {
    ReportValue(entry, "a message named '" + message.name + "' already exists", d_);
    return false;
  }
  if (messages_.size() >= kMaxMessages) {
    ReportValue(entry, "too many message types, expected at most 256", d_);
    return false;
  }
  messages_.push_back(std::move(message));
  return true;
}

std::optional<std::vector<size_t>> ScenarioDraft::ReadFieldList(const ConfigEntry& entry) {
  const std::optional<std::vector<ConfigEntry>> items = ReadList(entry, d_);
  if (!items) return std::nullopt;
  if (items->empty()) {
    ReportValue(entry, "expected at least one field", d_);
    return std::nullopt;
  }
  std::vector<size_t> fields;
  bool ok = true;
  for (const ConfigEntry& item : *items) {
    const std::optional<size_t> field = LookupField(item);
    if (field && std::find(fields.begin(), fields.end(), *field) != fields.end()) {
      ReportValue(item, "field '" + fields_[*field].name + "' is listed twice", d_);
      ok = false;
    } else if (field) {
      fields.push_back(*field);
    }
    ok = field.has_value() && ok;
  }
  if (!ok) return std::nullopt;
  return fields;
}

std::optional<size_t> ScenarioDraft::FindField(std::string_view name) const {
  for (size_t i = 0; i < fields_.size(); ++i) {
    if (fields_[i].name == name) return i;
  }
  return std::nullopt;
}

ScenarioMessage* ScenarioDraft::FindMessage(std::string_view name) {
  for (ScenarioMessage& message : messages_) {
    if (message.name == name) return &message;
  }
  return nullptr;
}

std::optional<size_t> ScenarioDraft::LookupField(const ConfigEntry& entry) {
  const std::optional<std::string> name = ReadString(entry, d_);
  if (!name) return std::nullopt;
  if (const std::optional<size_t> found = FindField(*name)) return found;
  std::vector<std::string_view> names;
  for (const ScenarioField& field : fields_) names.push_back(field.name);
  ReportValue(
      entry, UnknownName("unknown field", *name, names, ", expected a field defined under fields:"),
      d_);
  return std::nullopt;
}

ScenarioMessage* ScenarioDraft::LookupMessage(const ConfigEntry& entry) {
  const std::optional<std::string> name = ReadString(entry, d_);
  if (!name) return nullptr;
  if (ScenarioMessage* found = FindMessage(*name)) return found;
  std::vector<std::string_view> names;
  for (const ScenarioMessage& message : messages_) names.push_back(message.name);
  ReportValue(entry,
              UnknownName("no message", *name, names,
                          " at this phase, expected one of " + JoinChoices(names)),
              d_);
  return nullptr;
}

void ScenarioDraft::RemoveMessage(const ScenarioMessage* message) {
  messages_.erase(messages_.begin() + (message - messages_.data()));
}

std::string ScenarioDraft::JoinFieldNames(const std::vector<size_t>& indexes) const {
  std::string out;
  for (const size_t i : indexes) out += (out.empty() ? "" : ", ") + fields_[i].name;
  return out;
}

}  // namespace codedrift::scenario_parse
