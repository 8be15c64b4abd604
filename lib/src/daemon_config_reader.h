// Schema-walk helpers for YAML configs: positions, collected diagnostics, mappings checked
// against their allowed keys, and typed scalar reads that report "file:line:column: key:
// problem, expected form". Internal to the library; single-threaded use.
#pragma once

#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include <yaml-cpp/yaml.h>

#include "codedrift/config_values.h"

namespace codedrift {

// A 1-based line and column.
struct SourcePosition {
  int line = 1;
  int column = 1;
};

// Where the node starts; 1:1 when yaml-cpp has no mark for it.
SourcePosition PositionOf(const YAML::Node& node);

// Collects error messages, each prefixed with "file:line:column: ". Caps the count so a
// hostile file cannot produce an unbounded report. The walk visits sections in schema order;
// the report is sorted so it reads top to bottom like the file.
class ConfigDiagnostics {
 public:
  explicit ConfigDiagnostics(std::string file_name) : file_name_(std::move(file_name)) {}

  void Report(SourcePosition at, std::string_view what);
  bool has_errors() const { return !messages_.empty(); }
  // All messages in file order (line, then column), one per line, no trailing newline.
  std::string Joined() const;

 private:
  struct Message {
    SourcePosition at;
    std::string text;
  };
  std::string file_name_;
  std::vector<Message> messages_;
  size_t suppressed_ = 0;
};

// Parses `text` as exactly one YAML document (empty text gives a null node). Syntax errors,
// a stray token and a second document are reported with their position. Use this instead of
// yaml-cpp 0.7's LoadAll, which never returns on a lone "," (see daemon_config_yaml.cc).
std::optional<YAML::Node> LoadSingleYamlDocument(std::string_view text,
                                                 ConfigDiagnostics& diagnostics);

// A value in the config and the key it was found under (the parent's key for list items);
// `key` prefixes messages about the value.
struct ConfigEntry {
  std::string key;
  SourcePosition key_position;
  YAML::Node value;

  // The value's position; the key's when the value is empty (yaml-cpp marks an empty value
  // at the start of the next line, which would mislead).
  SourcePosition value_position() const;
};

// The entry for the document root (key "config").
ConfigEntry RootEntry(const YAML::Node& document);

// A mapping whose keys were checked against the keys its section allows. Construction
// reports unknown keys (with a did-you-mean or the allowed list), repeated keys and keys
// that are not plain scalars; Find then sees only the allowed keys.
class ConfigMap {
 public:
  // Empty (and reported) when entry.value is not a mapping. `section` names it in messages,
  // e.g. "model".
  static std::optional<ConfigMap> Open(const ConfigEntry& entry, std::string_view section,
                                       std::span<const std::string_view> allowed,
                                       ConfigDiagnostics& diagnostics);

  const ConfigEntry* Find(std::string_view key) const;
  // Find, reporting "missing required key" at the mapping when absent.
  const ConfigEntry* Require(std::string_view key, ConfigDiagnostics& diagnostics) const;

  const std::vector<ConfigEntry>& entries() const { return entries_; }
  SourcePosition position() const { return position_; }
  const std::string& section() const { return section_; }

 private:
  std::vector<ConfigEntry> entries_;
  SourcePosition position_;
  std::string section_;
};

// Reports "key: problem" at the entry's value.
void ReportValue(const ConfigEntry& entry, std::string_view problem,
                 ConfigDiagnostics& diagnostics);

// Typed reads: each returns nothing and reports when the value does not fit.
std::optional<std::string> ReadString(const ConfigEntry& entry, ConfigDiagnostics& diagnostics);
// A non-empty string without NUL bytes.
std::optional<std::string> ReadPath(const ConfigEntry& entry, ConfigDiagnostics& diagnostics);
// A name: [a-z0-9_-]{1,64}.
std::optional<std::string> ReadName(const ConfigEntry& entry, ConfigDiagnostics& diagnostics);
// A plain (unquoted) decimal integer in [min, max].
std::optional<uint64_t> ReadInteger(const ConfigEntry& entry, uint64_t min, uint64_t max,
                                    ConfigDiagnostics& diagnostics);
// true or false (also True/TRUE/False/FALSE), unquoted.
std::optional<bool> ReadBool(const ConfigEntry& entry, ConfigDiagnostics& diagnostics);
// A duration of at least `min`.
std::optional<ConfigDuration> ReadDuration(const ConfigEntry& entry, ConfigDuration min,
                                           ConfigDiagnostics& diagnostics);
// A percentage or ratio strictly between 0 and 1.
std::optional<double> ReadOpenRatio(const ConfigEntry& entry, ConfigDiagnostics& diagnostics);
// One of `choices`; returns its index.
std::optional<size_t> ReadChoice(const ConfigEntry& entry,
                                 std::span<const std::string_view> choices,
                                 ConfigDiagnostics& diagnostics);
// The items of a list, each as an entry under the list's key; empty (and reported) when the
// value is not a list or has more than `max_items` items (YAML aliases can make a short file
// name the same large list many times over, so callers bound what they will walk).
std::optional<std::vector<ConfigEntry>> ReadList(const ConfigEntry& entry,
                                                 ConfigDiagnostics& diagnostics,
                                                 size_t max_items = SIZE_MAX);

}  // namespace codedrift
