// Generic pieces of the code-table reader: mappings, integers and symbols with their lines.
#include "code_table_parser.h"

#include <charconv>
#include <cstdint>
#include <limits>
#include <map>
#include <string>
#include <string_view>
#include <vector>

#include <yaml-cpp/yaml.h>

#include "codedrift/code_table.h"

#include "code_table_text.h"
#include "daemon_config_text.h"

namespace codedrift::table_parse {

std::string_view NodeKindName(const YAML::Node& node) {
  switch (node.Type()) {
    case YAML::NodeType::Map:
      return "a mapping";
    case YAML::NodeType::Sequence:
      return "a sequence";
    case YAML::NodeType::Scalar:
      return "a scalar";
    default:
      return "nothing";
  }
}

std::string UnknownKeyMessage(std::string_view where, std::string_view key,
                              std::span<const std::string_view> known) {
  std::string message = "unknown key '" + std::string(key) + "'" + std::string(where);
  const std::string_view suggestion = ClosestMatch(key, known);
  if (!suggestion.empty()) return message + " (did you mean '" + std::string(suggestion) + "'?)";
  message += " (expected one of: ";
  for (size_t i = 0; i < known.size(); ++i) {
    message += (i == 0 ? "" : ", ") + std::string(known[i]);
  }
  return message + ")";
}

Result<std::vector<Entry>> TableParser::Entries(const YAML::Node& map, int line,
                                                std::string_view what) {
  if (!map.IsMap()) {
    return At(line,
              std::string(what) + ": expected a mapping, found " + std::string(NodeKindName(map)));
  }
  std::vector<Entry> entries;
  for (auto it = map.begin(); it != map.end(); ++it) {
    Entry entry{it->first, it->second, it->first.Mark().line + 1};
    if (!entry.key.IsScalar() && !entry.key.IsNull()) {
      return At(entry.line, std::string(what) + ": keys must be scalars, found " +
                                std::string(NodeKindName(entry.key)));
    }
    entries.push_back(entry);
  }
  return entries;
}

Result<uint64_t> TableParser::Unsigned(const YAML::Node& node, int line, const std::string& what,
                                       uint64_t lo, uint64_t hi) const {
  const std::string range =
      hi == std::numeric_limits<uint64_t>::max()
          ? " must be an integer >= " + std::to_string(lo)
          : " must be an integer from " + std::to_string(lo) + " to " + std::to_string(hi);
  if (!node.IsScalar()) {
    return At(line, what + range + ", found " + std::string(NodeKindName(node)));
  }
  const std::string& text = node.Scalar();
  const char* begin = text.data();
  const char* end = text.data() + text.size();
  if (!text.empty() && text[0] == '-') {
    int64_t negative = 0;
    auto [stop, ec] = std::from_chars(begin, end, negative);
    if (ec == std::errc() && stop == end) return At(line, what + range + ", got " + text);
    return At(line, what + range + ", got '" + text + "' (not an integer)");
  }
  uint64_t value = 0;
  auto [stop, ec] = std::from_chars(begin, end, value);
  if (ec == std::errc::result_out_of_range) return At(line, what + range + ", got " + text);
  if (ec != std::errc() || stop != end || text.empty()) {
    return At(line, what + range + ", got '" + text + "' (not an integer)");
  }
  if (value < lo || value > hi) return At(line, what + range + ", got " + text);
  return value;
}

Result<SymbolKey> TableParser::Symbol(const Entry& entry) const {
  if (entry.key.IsNull()) {
    return At(entry.line,
              "symbol written as a YAML null (~, null or nothing); quote it, e.g. \"null\", or "
              "write \"\" for the overflow token");
  }
  const std::string& text = entry.key.Scalar();
  auto key = table_.alphabet.ParseKey(text);
  if (!key.ok()) return At(entry.line, key.error().message);
  if (table_.alphabet.kind == AlphabetKind::kTokens && key.value() != kEndOfRecordToken &&
      key.value().find('\n') != std::string::npos) {
    return At(entry.line, "token " + table_text::DoubleQuoted(text) +
                              " contains a newline (only the end-of-record token \"\\n\" may)");
  }
  return key;
}

Result<std::map<SymbolKey, uint64_t>> TableParser::SymbolMap(const Entry& section,
                                                             std::string_view value_name,
                                                             uint64_t lo, uint64_t hi) {
  const std::string section_name = section.key.Scalar();
  auto entries = Entries(section.value, ValueLine(section), section_name);
  if (!entries.ok()) return entries.error();
  std::map<SymbolKey, uint64_t> values;
  std::map<SymbolKey, int> first_line;
  for (const Entry& entry : entries.value()) {
    auto key = Symbol(entry);
    if (!key.ok()) return key.error();
    const std::string shown = table_.alphabet.FormatKey(key.value());
    auto [it, inserted] = first_line.emplace(key.value(), entry.line);
    if (!inserted) {
      return At(entry.line, "duplicate symbol " + table_text::Scalar(shown) + " in " +
                                section_name + " (first at line " + std::to_string(it->second) +
                                ")");
    }
    auto value = Unsigned(entry.value, ValueLine(entry),
                          std::string(value_name) + " of " + table_text::Scalar(shown), lo, hi);
    if (!value.ok()) return value.error();
    values.emplace(key.value(), value.value());
  }
  return values;
}

}  // namespace codedrift::table_parse
