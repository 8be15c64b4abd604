// Pieces of the scenario reader shared between its files: typed reads the config reader does
// not have, field definitions and their retuning, and the text --list shows for a change.
// Internal to the library; single-threaded use.
#pragma once

#include <optional>
#include <span>
#include <string>
#include <string_view>

#include "codedrift/scenario.h"

#include "daemon_config_reader.h"

namespace codedrift::scenario_parse {

// A plain (unquoted) finite decimal number, e.g. 12, -3.5, 1e-3.
std::optional<double> ReadNumber(const ConfigEntry& entry, ConfigDiagnostics& diagnostics);
// A plain whole number in [min, max], sign allowed.
std::optional<int64_t> ReadSigned(const ConfigEntry& entry, int64_t min, int64_t max,
                                  ConfigDiagnostics& diagnostics);
// A weight or rate: a plain number > 0 and at most `max`.
std::optional<double> ReadPositive(const ConfigEntry& entry, double max,
                                   ConfigDiagnostics& diagnostics);

// Field kinds and their keys (scenario_field_keys.cc). Kind names are in FieldShape's order.
std::span<const std::string_view> FieldKindNames();
std::string_view DistributionName(Distribution distribution);
std::string_view NumberBaseName(NumberBase base);
std::string_view TimeStyleName(TimeStyle style);
std::span<const std::string_view> FieldKeysOf(const FieldShape& shape);
// The shape of kind FieldKindNames()[kind] with every key at its default.
FieldShape DefaultFieldShape(size_t kind);
// Sets one key of the field's kind from the entry. nullopt when the key is not one of the
// kind's (not reported: the caller says so); false when its value is bad (reported).
std::optional<bool> ApplyFieldKey(const ConfigEntry& entry, FieldShape& shape,
                                  ConfigDiagnostics& diagnostics);

// A field name or record key: 1 to 64 of a-z, A-Z, 0-9, _, - and . (safe in every layout).
bool ValidRecordKey(std::string_view key);

// Reads `{kind: ..., key: ..., ...}` under fields: as the field `name`.
std::optional<ScenarioField> ReadFieldDefinition(const ConfigEntry& entry, std::string_view name,
                                                 ConfigDiagnostics& diagnostics);

// The keys a retune mapping may hold: `field` and every key of every kind (`kind` included, so
// that trying to change it gets a clear message rather than "unknown key").
std::span<const std::string_view> RetuneKeys();

// Applies a retune's keys (every key of `map` but `field`) to `field` and checks the result.
// Returns false (reported) when a key does not apply to the field's kind or the result is
// inconsistent; `field` is then unspecified.
bool RetuneField(const ConfigMap& map, ScenarioField& field, ConfigDiagnostics& diagnostics);

// The fields and message types as phases edit them, with lookups that report unknown names
// with a did-you-mean. Messages refer to fields by index into `fields`, which never changes
// size after the fields: section is read.
class ScenarioDraft {
 public:
  explicit ScenarioDraft(ConfigDiagnostics& diagnostics) : d_(diagnostics) {}

  // Reads the fields: section.
  bool ReadFields(const ConfigEntry& entry);
  // Reads a message type (messages: items, add_message); `section` names it in messages.
  std::optional<ScenarioMessage> ReadMessage(const ConfigEntry& entry, std::string_view section);
  // Adds a message type; reports a duplicate name at `entry`.
  bool AddMessage(ScenarioMessage message, const ConfigEntry& entry);

  std::optional<size_t> FindField(std::string_view name) const;
  ScenarioMessage* FindMessage(std::string_view name);
  // The field or message named by the entry's value; reported when there is none.
  std::optional<size_t> LookupField(const ConfigEntry& entry);
  ScenarioMessage* LookupMessage(const ConfigEntry& entry);
  void RemoveMessage(const ScenarioMessage* message);
  std::string JoinFieldNames(const std::vector<size_t>& indexes) const;

  std::vector<ScenarioField>& fields() { return fields_; }
  const std::vector<ScenarioMessage>& messages() const { return messages_; }
  ConfigDiagnostics& diagnostics() { return d_; }

 private:
  std::optional<std::vector<size_t>> ReadFieldList(const ConfigEntry& entry);

  ConfigDiagnostics& d_;
  std::vector<ScenarioField> fields_;
  std::vector<ScenarioMessage> messages_;
};

// Applies one item of a phase's `changes` to the draft and appends its description.
bool ApplyChange(const ConfigEntry& entry, ScenarioDraft& draft,
                 std::vector<std::string>& descriptions);

// "pairs", "csv", "json".
std::string_view LayoutName(RecordLayout layout);

// "number", "choice", ...
std::string_view KindName(const FieldShape& shape);

// What differs between two settings of one field: "decimals 1 -> 3, range 8..42 -> 5..30".
// Empty when nothing does.
std::string DescribeFieldChange(const ScenarioField& before, const ScenarioField& after);

}  // namespace codedrift::scenario_parse
