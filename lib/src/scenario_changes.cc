// A phase's changes: each edits the draft of fields and message types and says, in one
// sentence for --list, what it changed.
#include <algorithm>
#include <array>

#include "daemon_config_text.h"
#include "scenario_parser.h"
#include "scenario_text.h"

namespace codedrift::scenario_parse {
namespace {

using scenario_text::NumberText;

constexpr std::array<std::string_view, 6> kChangeKinds = {
    "add_field", "remove_field", "add_message", "remove_message", "reweight", "retune"};
constexpr std::array<std::string_view, 4> kAddFieldKeys = {"message", "field", "after", "before"};
constexpr std::array<std::string_view, 2> kRemoveFieldKeys = {"message", "field"};
constexpr std::array<std::string_view, 1> kRemoveMessageKeys = {"message"};
constexpr std::array<std::string_view, 2> kReweightKeys = {"message", "weight"};
constexpr double kMaxWeight = 1e15;

bool AddMessage(const ConfigEntry& change, ScenarioDraft& draft, std::string& description) {
  std::optional<ScenarioMessage> message = draft.ReadMessage(change, "add_message");
  if (!message) return false;
  description = "new message " + message->name + " (weight " + NumberText(message->weight) + ", " +
                std::string(LayoutName(message->layout)) + ": " +
                draft.JoinFieldNames(message->fields) + ")";
  return draft.AddMessage(std::move(*message), change);
}

bool Retune(const ConfigEntry& change, ScenarioDraft& draft, std::string& description) {
  ConfigDiagnostics& d = draft.diagnostics();
  const std::optional<ConfigMap> map = ConfigMap::Open(change, "retune", RetuneKeys(), d);
  if (!map) return false;
  const ConfigEntry* name = map->Require("field", d);
  const std::optional<size_t> field = name ? draft.LookupField(*name) : std::nullopt;
  if (!field) return false;
  ScenarioField& target = draft.fields()[*field];
  ScenarioField retuned = target;
  if (!RetuneField(*map, retuned, d)) return false;
  const std::string what = DescribeFieldChange(target, retuned);
  description = target.name + ": " + (what.empty() ? "retuned to the same settings" : what);
  target = std::move(retuned);
  return true;
}

bool AddField(const ConfigMap& map, const ConfigEntry& field_entry, size_t field,
              ScenarioMessage& message, ScenarioDraft& draft, std::string& description) {
  ConfigDiagnostics& d = draft.diagnostics();
  const std::string& name = draft.fields()[field].name;
  std::vector<size_t>& fields = message.fields;
  if (std::find(fields.begin(), fields.end(), field) != fields.end()) {
    ReportValue(field_entry, "message " + message.name + " already has field '" + name + "'", d);
    return false;
  }
  const ConfigEntry* after = map.Find("after");
  const ConfigEntry* before = map.Find("before");
  if (after != nullptr && before != nullptr) {
    d.Report(before->key_position, "give `after` or `before`, not both");
    return false;
  }
  auto where = fields.end();
  description = message.name + ": adds field " + name;
  if (const ConfigEntry* anchor = after != nullptr ? after : before) {
    const std::optional<size_t> anchor_field = draft.LookupField(*anchor);
    if (!anchor_field) return false;
    const std::string& anchor_name = draft.fields()[*anchor_field].name;
    where = std::find(fields.begin(), fields.end(), *anchor_field);
    if (where == fields.end()) {
      ReportValue(*anchor,
                  "message " + message.name + " has no field '" + anchor_name + "' to place it by",
                  d);
      return false;
    }
    if (after != nullptr) ++where;
    description += " " + anchor->key + " " + anchor_name;
  } else {
    description += " at the end";
  }
  fields.insert(where, field);
  return true;
}

bool RemoveField(const ConfigEntry& field_entry, size_t field, ScenarioMessage& message,
                 ScenarioDraft& draft, std::string& description) {
  ConfigDiagnostics& d = draft.diagnostics();
  const std::string& name = draft.fields()[field].name;
  std::vector<size_t>& fields = message.fields;
  const auto present = std::find(fields.begin(), fields.end(), field);
  if (present == fields.end()) {
    ReportValue(field_entry, "message " + message.name + " has no field '" + name + "' here", d);
    return false;
  }
  if (fields.size() == 1) {
    ReportValue(field_entry, "cannot remove the last field of message " + message.name, d);
    return false;
  }
  fields.erase(present);
  description = message.name + ": drops field " + name;
  return true;
}

// add_field, remove_field, remove_message and reweight: edits of one message type.
bool EditMessage(const ConfigEntry& change, ScenarioDraft& draft, std::string& description) {
  ConfigDiagnostics& d = draft.diagnostics();
  std::span<const std::string_view> keys = kReweightKeys;
  if (change.key == "add_field") keys = kAddFieldKeys;
  if (change.key == "remove_field") keys = kRemoveFieldKeys;
  if (change.key == "remove_message") keys = kRemoveMessageKeys;
  const std::optional<ConfigMap> map = ConfigMap::Open(change, change.key, keys, d);
  if (!map) return false;
  const ConfigEntry* message_entry = map->Require("message", d);
  ScenarioMessage* message = message_entry ? draft.LookupMessage(*message_entry) : nullptr;
  if (message == nullptr) return false;
  if (change.key == "remove_message") {
    if (draft.messages().size() == 1) {
      ReportValue(*message_entry, "cannot remove the last message type", d);
      return false;
    }
    description = "message " + message->name + " stops";
    draft.RemoveMessage(message);
    return true;
  }
  if (change.key == "reweight") {
    const ConfigEntry* e = map->Require("weight", d);
    const std::optional<double> weight = e ? ReadPositive(*e, kMaxWeight, d) : std::nullopt;
    if (!weight) return false;
    description =
        message->name + ": weight " + NumberText(message->weight) + " -> " + NumberText(*weight);
    message->weight = *weight;
    return true;
  }
  const ConfigEntry* field_entry = map->Require("field", d);
  const std::optional<size_t> field = field_entry ? draft.LookupField(*field_entry) : std::nullopt;
  if (!field) return false;
  if (change.key == "remove_field") {
    return RemoveField(*field_entry, *field, *message, draft, description);
  }
  return AddField(*map, *field_entry, *field, *message, draft, description);
}

}  // namespace

bool ApplyChange(const ConfigEntry& entry, ScenarioDraft& draft,
                 std::vector<std::string>& descriptions) {
  ConfigDiagnostics& d = draft.diagnostics();
  const std::optional<ConfigMap> outer = ConfigMap::Open(entry, "change", kChangeKinds, d);
  if (!outer) return false;
  if (entry.value.size() != 1) {
    d.Report(outer->position(), "a change is one of " + JoinChoices(kChangeKinds) +
                                    ", expected exactly one of them per list item");
    return false;
  }
  if (outer->entries().size() != 1) return false;  // its one key was unknown (reported)
  const ConfigEntry& change = outer->entries()[0];
  std::string description;
  bool ok = false;
  if (change.key == "add_message") {
    ok = AddMessage(change, draft, description);
  } else if (change.key == "retune") {
    ok = Retune(change, draft, description);
  } else {
    ok = EditMessage(change, draft, description);
  }
  if (ok) descriptions.push_back(std::move(description));
  return ok;
}

}  // namespace codedrift::scenario_parse
