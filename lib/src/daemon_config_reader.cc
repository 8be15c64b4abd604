#include "daemon_config_reader.h"

#include <algorithm>
#include <charconv>

#include "daemon_config_text.h"

namespace codedrift {
namespace {

constexpr size_t kMaxMessages = 50;

// How a value looks, for "expected X, got Y".
std::string Describe(const YAML::Node& node) {
  switch (node.Type()) {
    case YAML::NodeType::Scalar:
      return (node.Tag() == "!" ? "the quoted string " : "") + QuoteForMessage(node.Scalar());
    case YAML::NodeType::Sequence:
      return "a list";
    case YAML::NodeType::Map:
      return "a mapping";
    default:
      return "nothing";
  }
}

// Quoted scalars are strings in YAML; numbers and booleans must be written plainly.
bool IsPlainScalar(const YAML::Node& node) { return node.IsScalar() && node.Tag() != "!"; }

}  // namespace

SourcePosition PositionOf(const YAML::Node& node) {
  const YAML::Mark mark = node.Mark();
  if (mark.line < 0 || mark.column < 0) return {};
  return {mark.line + 1, mark.column + 1};
}

void ConfigDiagnostics::Report(SourcePosition at, std::string_view what) {
  if (messages_.size() >= kMaxMessages) {
    ++suppressed_;
    return;
  }
  messages_.push_back({at, file_name_ + ":" + std::to_string(at.line) + ":" +
                               std::to_string(at.column) + ": " + std::string(what)});
}

std::string ConfigDiagnostics::Joined() const {
  std::vector<Message> sorted = messages_;
  std::stable_sort(sorted.begin(), sorted.end(), [](const Message& a, const Message& b) {
    return a.at.line != b.at.line ? a.at.line < b.at.line : a.at.column < b.at.column;
  });
  std::string out;
  for (const Message& message : sorted) {
    if (!out.empty()) out += '\n';
    out += message.text;
  }
  if (suppressed_ > 0) out += "\n(" + std::to_string(suppressed_) + " more errors not shown)";
  return out;
}

SourcePosition ConfigEntry::value_position() const {
  return value.IsNull() || !value.IsDefined() ? key_position : PositionOf(value);
}

ConfigEntry RootEntry(const YAML::Node& document) {
  return {"config", PositionOf(document), document};
}

std::optional<ConfigMap> ConfigMap::Open(const ConfigEntry& entry, std::string_view section,
                                         std::span<const std::string_view> allowed,
                                         ConfigDiagnostics& diagnostics) {
  if (!entry.value.IsMap()) {
    ReportValue(entry, "expected a mapping, got " + Describe(entry.value), diagnostics);
    return std::nullopt;
  }
  ConfigMap map;
  map.position_ = entry.value_position();
  map.section_ = std::string(section);
  for (auto it = entry.value.begin(); it != entry.value.end(); ++it) {
    const SourcePosition at = PositionOf(it->first);
    if (!it->first.IsScalar()) {
      diagnostics.Report(
          at, "keys in " + map.section_ + " must be plain words, got " + Describe(it->first));
      continue;
    }
    const std::string& key = it->first.Scalar();
    if (std::find(allowed.begin(), allowed.end(), key) == allowed.end()) {
      std::string message = "unknown key " + QuoteForMessage(key) + " in " + map.section_;
      if (std::string_view match = ClosestMatch(key, allowed); !match.empty()) {
        message += " (did you mean '" + std::string(match) + "'?)";
      } else {
        message += ", expected " + JoinChoices(allowed);
      }
      diagnostics.Report(at, message);
      continue;
    }
    if (const ConfigEntry* first = map.Find(key)) {
      diagnostics.Report(at, "duplicate key " + QuoteForMessage(key) + " in " + map.section_ +
                                 ", expected each key once (first at line " +
                                 std::to_string(first->key_position.line) + ")");
      continue;
    }
    map.entries_.push_back({key, at, it->second});
  }
  return map;
}

const ConfigEntry* ConfigMap::Find(std::string_view key) const {
  for (const ConfigEntry& entry : entries_) {
    if (entry.key == key) return &entry;
  }
  return nullptr;
}

const ConfigEntry* ConfigMap::Require(std::string_view key, ConfigDiagnostics& diagnostics) const {
  const ConfigEntry* entry = Find(key);
  if (entry == nullptr) {
    diagnostics.Report(position_, "missing required key '" + std::string(key) + "' in " + section_);
  }
  return entry;
}

void ReportValue(const ConfigEntry& entry, std::string_view problem,
                 ConfigDiagnostics& diagnostics) {
  diagnostics.Report(entry.value_position(), entry.key + ": " + std::string(problem));
}

std::optional<std::string> ReadString(const ConfigEntry& entry, ConfigDiagnostics& diagnostics) {
  if (!entry.value.IsScalar()) {
    ReportValue(entry, "expected a string, got " + Describe(entry.value), diagnostics);
    return std::nullopt;
  }
  return entry.value.Scalar();
}

std::optional<std::string> ReadPath(const ConfigEntry& entry, ConfigDiagnostics& diagnostics) {
  std::optional<std::string> path = ReadString(entry, diagnostics);
  if (path && (path->empty() || path->find('\0') != std::string::npos)) {
    ReportValue(entry, "expected a file path, got " + Describe(entry.value), diagnostics);
    return std::nullopt;
  }
  return path;
}

std::optional<std::string> ReadName(const ConfigEntry& entry, ConfigDiagnostics& diagnostics) {
  std::optional<std::string> name = ReadString(entry, diagnostics);
  if (!name) return std::nullopt;
  const bool valid =
      !name->empty() && name->size() <= 64 && std::all_of(name->begin(), name->end(), [](char c) {
        return (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '_' || c == '-';
      });
  if (!valid) {
    ReportValue(entry,
                QuoteForMessage(*name) +
                    " is not a valid name, expected 1 to 64 characters from a-z, 0-9, _ and -",
                diagnostics);
    return std::nullopt;
  }
  return name;
}

std::optional<uint64_t> ReadInteger(const ConfigEntry& entry, uint64_t min, uint64_t max,
                                    ConfigDiagnostics& diagnostics) {
  const std::string range = std::to_string(min) + ".." + std::to_string(max);
  const std::string& text = entry.value.IsScalar() ? entry.value.Scalar() : std::string();
  uint64_t value = 0;
  const bool digits = !text.empty() && std::all_of(text.begin(), text.end(),
                                                   [](char c) { return c >= '0' && c <= '9'; });
  if (!IsPlainScalar(entry.value) || !digits) {
    ReportValue(entry, "expected a whole number " + range + ", got " + Describe(entry.value),
                diagnostics);
    return std::nullopt;
  }
  const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (ec != std::errc() || end != text.data() + text.size() || value < min || value > max) {
    const std::string shown = text.size() > 24 ? text.substr(0, 24) + "..." : text;
    ReportValue(entry, shown + " is out of range, expected " + range, diagnostics);
    return std::nullopt;
  }
  return value;
}

std::optional<bool> ReadBool(const ConfigEntry& entry, ConfigDiagnostics& diagnostics) {
  if (IsPlainScalar(entry.value)) {
    const std::string& text = entry.value.Scalar();
    if (text == "true" || text == "True" || text == "TRUE") return true;
    if (text == "false" || text == "False" || text == "FALSE") return false;
  }
  ReportValue(entry, "expected true or false, got " + Describe(entry.value), diagnostics);
  return std::nullopt;
}

std::optional<ConfigDuration> ReadDuration(const ConfigEntry& entry, ConfigDuration min,
                                           ConfigDiagnostics& diagnostics) {
  if (!entry.value.IsScalar()) {
    ReportValue(entry, "expected a duration like 5s, got " + Describe(entry.value), diagnostics);
    return std::nullopt;
  }
  Result<ConfigDuration> duration = ParseDuration(entry.value.Scalar());
  if (!duration.ok()) {
    ReportValue(entry, duration.error().message, diagnostics);
    return std::nullopt;
  }
  if (duration.value() < min) {
    ReportValue(entry,
                entry.value.Scalar() + " is too short, expected at least " + FormatDuration(min),
                diagnostics);
    return std::nullopt;
  }
  return duration.value();
}

std::optional<double> ReadOpenRatio(const ConfigEntry& entry, ConfigDiagnostics& diagnostics) {
  if (!entry.value.IsScalar()) {
    ReportValue(entry, "expected a percentage like 5%, got " + Describe(entry.value), diagnostics);
    return std::nullopt;
  }
  Result<double> ratio = ParseRatio(entry.value.Scalar());
  if (!ratio.ok()) {
    ReportValue(entry, ratio.error().message, diagnostics);
    return std::nullopt;
  }
  if (ratio.value() <= 0.0 || ratio.value() >= 1.0) {
    ReportValue(entry,
                entry.value.Scalar() +
                    " is out of range, expected more than 0% and less than 100% (a ratio "
                    "between 0 and 1)",
                diagnostics);
    return std::nullopt;
  }
  return ratio.value();
}

std::optional<size_t> ReadChoice(const ConfigEntry& entry,
                                 std::span<const std::string_view> choices,
                                 ConfigDiagnostics& diagnostics) {
  if (entry.value.IsScalar()) {
    const std::string& text = entry.value.Scalar();
    const auto it = std::find(choices.begin(), choices.end(), text);
    if (it != choices.end()) return static_cast<size_t>(it - choices.begin());
    std::string message = "unknown value " + QuoteForMessage(text);
    if (std::string_view match = ClosestMatch(text, choices); !match.empty()) {
      message += " (did you mean '" + std::string(match) + "'?)";
    } else {
      message += ", expected " + JoinChoices(choices);
    }
    ReportValue(entry, message, diagnostics);
    return std::nullopt;
  }
  ReportValue(entry, "expected " + JoinChoices(choices) + ", got " + Describe(entry.value),
              diagnostics);
  return std::nullopt;
}

std::optional<std::vector<ConfigEntry>> ReadList(const ConfigEntry& entry,
                                                 ConfigDiagnostics& diagnostics, size_t max_items) {
  if (!entry.value.IsSequence()) {
    ReportValue(entry, "expected a list, got " + Describe(entry.value), diagnostics);
    return std::nullopt;
  }
  if (entry.value.size() > max_items) {
    ReportValue(entry,
                "the list has " + std::to_string(entry.value.size()) + " items, expected at most " +
                    std::to_string(max_items),
                diagnostics);
    return std::nullopt;
  }
  std::vector<ConfigEntry> items;
  for (const YAML::Node& item : entry.value) {
    // An empty item ("- ") has no useful mark of its own: fall back to the list's key.
    const SourcePosition at = item.IsNull() ? entry.key_position : PositionOf(item);
    items.push_back({entry.key, at, item});
  }
  return items;
}

}  // namespace codedrift
