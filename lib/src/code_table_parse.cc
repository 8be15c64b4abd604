// Reading code-table YAML (DESIGN.md section 5): every rejection names file, line and reason.
#include <algorithm>
#include <charconv>
#include <cstdint>
#include <cstdio>
#include <exception>
#include <limits>
#include <map>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include <yaml-cpp/yaml.h>

#include "codedrift/canonical_code.h"
#include "codedrift/code_table.h"

#include "code_table_text.h"

namespace codedrift {
namespace {

constexpr int kFormatVersion = 1;

constexpr std::string_view kTopKeys[] = {"table",          "alphabet", "kind",    "max_length",
                                         "escape",         "lengths",  "bits",    "frequencies",
                                         "precision_bits", "counts",   "metadata"};
constexpr std::string_view kEscapeKeys[] = {"length", "frequency", "literal_bits"};

std::string_view KindName(CodeKind kind) {
  switch (kind) {
    case CodeKind::kPrefix:
      return "prefix";
    case CodeKind::kFixed:
      return "fixed";
    case CodeKind::kFrequencies:
      return "frequencies";
  }
  return "?";
}

// The kind a kind-specific key belongs to; nullopt for keys every kind accepts.
std::optional<CodeKind> OwnerKind(std::string_view key) {
  if (key == "lengths") return CodeKind::kPrefix;
  if (key == "bits") return CodeKind::kFixed;
  if (key == "frequencies" || key == "precision_bits") return CodeKind::kFrequencies;
  return std::nullopt;
}

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
  const std::string_view suggestion = table_text::ClosestWord(key, known);
  if (!suggestion.empty()) return message + " (did you mean '" + std::string(suggestion) + "'?)";
  message += " (expected one of: ";
  for (size_t i = 0; i < known.size(); ++i) {
    message += (i == 0 ? "" : ", ") + std::string(known[i]);
  }
  return message + ")";
}

// One entry of a mapping, with the lines errors point at.
struct Entry {
  YAML::Node key;
  YAML::Node value;
  int line = 0;  // 1-based line of the key
};

// Parses one table document; the first error wins. Not reusable across documents.
class TableParser {
 public:
  explicit TableParser(const std::string& file_name) : file_(file_name) {}

  Result<CodeTable> Parse(const YAML::Node& root);

 private:
  Error At(int line, const std::string& reason) const {
    return Error{file_ + ":" + std::to_string(line) + ": " + reason};
  }
  // Line of a value node; a missing value (null) points at its key's line instead.
  static int ValueLine(const Entry& entry) {
    if (entry.value.IsNull() || entry.value.Mark().line < 0) return entry.line;
    return entry.value.Mark().line + 1;
  }

  // Entries of a mapping in file order, rejecting non-scalar keys and duplicate key texts.
  Result<std::vector<Entry>> Entries(const YAML::Node& map, int line, std::string_view what);
  Result<uint64_t> Unsigned(const YAML::Node& node, int line, const std::string& what, uint64_t lo,
                            uint64_t hi) const;
  Result<SymbolKey> Symbol(const Entry& entry) const;
  // A `symbol: integer` section; values within lo..hi, symbols unique and in the alphabet.
  Result<std::map<SymbolKey, uint64_t>> SymbolMap(const Entry& section, std::string_view value_name,
                                                  uint64_t lo, uint64_t hi);

  Status ParseEscape(const Entry& entry);
  Status ParsePrefix(const Entry& lengths, const Entry* escape);
  Status ParseFixed(const Entry& bits);
  Status ParseFrequencies(const Entry& frequencies, const Entry* precision);
  Status ParseCounts(const Entry& entry);
  Status ParseMetadata(const Entry& entry);

  std::string file_;
  CodeTable table_;
};

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

Status TableParser::ParseEscape(const Entry& entry) {
  auto entries = Entries(entry.value, ValueLine(entry), "escape");
  if (!entries.ok()) return entries.error();
  const bool frequencies = table_.kind == CodeKind::kFrequencies;
  const std::string_view cost_key = frequencies ? "frequency" : "length";
  std::optional<uint64_t> cost;
  std::optional<uint64_t> literal_bits;
  std::map<std::string, int> seen;
  for (const Entry& field : entries.value()) {
    const std::string name = field.key.Scalar();
    auto [it, inserted] = seen.emplace(name, field.line);
    if (!inserted) {
      return At(field.line, "duplicate key 'escape." + name + "' (first at line " +
                                std::to_string(it->second) + ")");
    }
    if (name == "literal_bits") {
      auto value = Unsigned(field.value, ValueLine(field), "escape literal_bits", 1, 64);
      if (!value.ok()) return value.error();
      literal_bits = value.value();
    } else if (name == cost_key) {
      auto value =
          frequencies ? Unsigned(field.value, ValueLine(field), "escape frequency", 1,
                                 std::numeric_limits<uint64_t>::max())
                      : Unsigned(field.value, ValueLine(field), "escape length", 1, kMaxCodeLength);
      if (!value.ok()) return value.error();
      cost = value.value();
    } else if (name == "length" || name == "frequency") {
      return At(field.line, "escape '" + name + "' does not fit kind " +
                                std::string(KindName(table_.kind)) + " (its escape has '" +
                                std::string(cost_key) + "')");
    } else {
      return At(field.line, UnknownKeyMessage(" in escape", name, kEscapeKeys));
    }
  }
  if (!cost) return At(entry.line, "escape needs '" + std::string(cost_key) + "'");
  if (!literal_bits) return At(entry.line, "escape needs 'literal_bits'");
  EscapeCode escape;
  escape.literal_bits = static_cast<int>(*literal_bits);
  if (frequencies) {
    table_.escape_frequency = *cost;
  } else {
    escape.length = static_cast<int>(*cost);
  }
  table_.escape = escape;
  return Ok{};
}

Status TableParser::ParsePrefix(const Entry& lengths, const Entry* escape) {
  auto values = SymbolMap(lengths, "length", 1, kMaxCodeLength);
  if (!values.ok()) return values.error();
  std::vector<int> all;
  for (const auto& [key, length] : values.value()) {
    table_.lengths.emplace(key, static_cast<int>(length));
    all.push_back(static_cast<int>(length));
  }
  const KraftSum without_escape = ComputeKraftSum(all);
  if (without_escape.over()) {
    return At(lengths.line, "Kraft sum of the lengths is " +
                                table_text::ShortestDouble(without_escape.value()) +
                                " > 1: no prefix code has these lengths");
  }
  if (table_.escape) {
    all.push_back(table_.escape->length);
    const KraftSum with_escape = ComputeKraftSum(all);
    if (with_escape.over()) {
      return At(escape->line, "escape length " + std::to_string(table_.escape->length) +
                                  " does not fit: the lengths use Kraft sum " +
                                  table_text::ShortestDouble(without_escape.value()) +
                                  ", with the escape it is " +
                                  table_text::ShortestDouble(with_escape.value()) + " > 1");
    }
  }
  return Ok{};
}

Status TableParser::ParseFixed(const Entry& bits) {
  auto value = Unsigned(bits.value, ValueLine(bits), "bits", 1, kMaxCodeLength);
  if (!value.ok()) return value.error();
  table_.fixed_bits = static_cast<int>(value.value());
  const uint64_t size = table_.alphabet.Size();
  if (size == 0) {
    return At(bits.line, "kind fixed needs a bounded alphabet (bytes or field), not " +
                             table_.alphabet.ToString());
  }
  const uint64_t codewords = uint64_t{1} << table_.fixed_bits;
  if (size > codewords) {
    return At(
        bits.line,
        "a " + std::to_string(table_.fixed_bits) + "-bit fixed code has " +
            std::to_string(codewords) + " codewords, too few for the " + std::to_string(size) +
            " symbols of " + table_.alphabet.ToString() + " (Kraft sum " +
            table_text::ShortestDouble(static_cast<double>(size) / static_cast<double>(codewords)) +
            " > 1)");
  }
  return Ok{};
}

Status TableParser::ParseFrequencies(const Entry& frequencies, const Entry* precision) {
  auto values = SymbolMap(frequencies, "frequency", 1, std::numeric_limits<uint64_t>::max());
  if (!values.ok()) return values.error();
  uint64_t total = table_.escape_frequency;
  for (const auto& [key, frequency] : values.value()) {
    if (frequency > std::numeric_limits<uint64_t>::max() - total) {
      return At(frequencies.line, "the frequencies add up to 2^64 or more");
    }
    total += frequency;
  }
  table_.frequencies = std::move(values).value();
  if (total == 0) {
    return At(frequencies.line, "a frequency table needs at least one symbol or an escape");
  }
  if (precision != nullptr) {
    auto value = Unsigned(precision->value, ValueLine(*precision), "precision_bits", 0, 32);
    if (!value.ok()) return value.error();
    table_.precision_bits = static_cast<int>(value.value());
    const uint64_t entries = table_.frequencies.size() + (table_.escape ? 1 : 0);
    if (table_.precision_bits > 0 && entries > (uint64_t{1} << table_.precision_bits)) {
      return At(precision->line, "precision_bits " + std::to_string(table_.precision_bits) +
                                     " is too small for " + std::to_string(entries) +
                                     " entries (escape included): each needs a frequency >= 1 "
                                     "out of 2^precision_bits");
    }
  }
  return Ok{};
}

Status TableParser::ParseCounts(const Entry& entry) {
  auto values = SymbolMap(entry, "count", 0, std::numeric_limits<uint64_t>::max());
  if (!values.ok()) return values.error();
  SymbolCounts counts(table_.alphabet);
  for (const auto& [key, count] : values.value()) {
    if (count > std::numeric_limits<uint64_t>::max() - counts.total()) {
      return At(entry.line, "the counts add up to 2^64 or more");
    }
    counts.Add(key, count);
  }
  table_.training_counts = std::move(counts);
  return Ok{};
}

Status TableParser::ParseMetadata(const Entry& entry) {
  auto entries = Entries(entry.value, ValueLine(entry), "metadata");
  if (!entries.ok()) return entries.error();
  for (const Entry& field : entries.value()) {
    if (field.key.IsNull()) return At(field.line, "metadata: a key is empty");
    const std::string name = field.key.Scalar();
    if (!field.value.IsScalar()) {
      return At(ValueLine(field), "metadata '" + name + "': expected a string, found " +
                                      std::string(NodeKindName(field.value)));
    }
    auto [it, inserted] = table_.metadata.emplace(name, field.value.Scalar());
    if (!inserted) {
      return At(field.line, "duplicate key 'metadata." + name + "'");
    }
  }
  return Ok{};
}

Result<CodeTable> TableParser::Parse(const YAML::Node& root) {
  const int root_line = std::max(1, root.Mark().line + 1);
  if (!root.IsMap()) {
    return At(root_line, "expected a mapping of table keys (table, alphabet, kind, ...), found " +
                             std::string(NodeKindName(root)));
  }
  auto entries = Entries(root, root_line, "table");
  if (!entries.ok()) return entries.error();
  std::map<std::string, Entry> keys;
  for (const Entry& entry : entries.value()) {
    if (entry.key.IsNull()) return At(entry.line, "empty key");
    const std::string name = entry.key.Scalar();
    auto [it, inserted] = keys.emplace(name, entry);
    if (!inserted) {
      return At(entry.line, "duplicate key '" + name + "' (first at line " +
                                std::to_string(it->second.line) + ")");
    }
    if (std::find(std::begin(kTopKeys), std::end(kTopKeys), name) == std::end(kTopKeys)) {
      return At(entry.line, UnknownKeyMessage("", name, kTopKeys));
    }
  }
  auto find = [&](std::string_view name) -> const Entry* {
    auto it = keys.find(std::string(name));
    return it == keys.end() ? nullptr : &it->second;
  };
  for (std::string_view required : {"table", "alphabet", "kind"}) {
    if (find(required) == nullptr) {
      return At(root_line, "missing required key '" + std::string(required) + "'");
    }
  }

  const Entry& version = *find("table");
  auto version_value =
      Unsigned(version.value, ValueLine(version), "table", 1, std::numeric_limits<uint64_t>::max());
  if (!version_value.ok()) return version_value.error();
  if (version_value.value() != kFormatVersion) {
    return At(ValueLine(version),
              "unsupported table format " + std::to_string(version_value.value()) +
                  " (this version reads format " + std::to_string(kFormatVersion) + ")");
  }

  const Entry& alphabet = *find("alphabet");
  if (!alphabet.value.IsScalar()) {
    return At(ValueLine(alphabet),
              "alphabet: expected bytes, bytes:<n>, tokens or field:<width "
              "bits>, found " +
                  std::string(NodeKindName(alphabet.value)));
  }
  auto parsed_alphabet = Alphabet::Parse(alphabet.value.Scalar());
  if (!parsed_alphabet.ok()) return At(ValueLine(alphabet), parsed_alphabet.error().message);
  table_.alphabet = parsed_alphabet.value();

  const Entry& kind = *find("kind");
  const std::string kind_text = kind.value.IsScalar() ? kind.value.Scalar() : "";
  if (kind_text == "prefix") {
    table_.kind = CodeKind::kPrefix;
  } else if (kind_text == "fixed") {
    table_.kind = CodeKind::kFixed;
  } else if (kind_text == "frequencies") {
    table_.kind = CodeKind::kFrequencies;
  } else {
    return At(ValueLine(kind),
              "unknown kind '" + kind_text + "' (expected prefix, fixed or frequencies)");
  }

  // Keys of another kind's section are a likely mix-up; say so before anything else.
  for (const Entry& entry : entries.value()) {
    const std::string name = entry.key.Scalar();
    const auto owner = OwnerKind(name);
    if (owner && *owner != table_.kind) {
      return At(entry.line, "'" + name + "' belongs to kind " + std::string(KindName(*owner)) +
                                ", but this table is kind " + std::string(KindName(table_.kind)));
    }
    if (name == "escape" && table_.kind == CodeKind::kFixed) {
      return At(entry.line, "kind fixed takes no escape: a fixed code covers every symbol");
    }
  }

  if (const Entry* max_length = find("max_length")) {
    auto value =
        Unsigned(max_length->value, ValueLine(*max_length), "max_length", 1, kMaxCodeLength);
    if (!value.ok()) return value.error();
    table_.max_length = static_cast<int>(value.value());
  }
  const Entry* escape = find("escape");
  if (escape != nullptr) {
    if (Status status = ParseEscape(*escape); !status.ok()) return status.error();
  }
  const std::string_view section = table_.kind == CodeKind::kPrefix  ? "lengths"
                                   : table_.kind == CodeKind::kFixed ? "bits"
                                                                     : "frequencies";
  const Entry* body = find(section);
  if (body == nullptr) {
    return At(root_line, "missing required key '" + std::string(section) + "' (kind " +
                             std::string(KindName(table_.kind)) + ")");
  }
  Status status = table_.kind == CodeKind::kPrefix ? ParsePrefix(*body, escape)
                  : table_.kind == CodeKind::kFixed
                      ? ParseFixed(*body)
                      : ParseFrequencies(*body, find("precision_bits"));
  if (!status.ok()) return status.error();
  if (const Entry* counts = find("counts")) {
    if (Status counted = ParseCounts(*counts); !counted.ok()) return counted.error();
  }
  if (const Entry* metadata = find("metadata")) {
    if (Status described = ParseMetadata(*metadata); !described.ok()) return described.error();
  }
  return std::move(table_);
}

// Line (1-based) of byte `offset` in `text`.
int LineAt(const std::string& text, size_t offset) {
  return 1 + static_cast<int>(std::count(text.begin(), text.begin() + offset, '\n'));
}

}  // namespace

Result<CodeTable> ParseCodeTable(const std::string& yaml_text, const std::string& file_name) {
  if (yaml_text.find_first_not_of(" \t\r\n") == std::string::npos) {
    return Error{file_name + ":1: the file is empty"};
  }
  // YAML allows no control characters but tab and line breaks; finding one means binary data,
  // which deserves a plainer message than whatever the YAML scanner would make of it.
  for (size_t i = 0; i < yaml_text.size(); ++i) {
    const auto byte = static_cast<unsigned char>(yaml_text[i]);
    if ((byte < 0x20 && byte != '\t' && byte != '\n' && byte != '\r') || byte == 0x7f) {
      char hex[8];
      std::snprintf(hex, sizeof hex, "0x%02x", byte);
      return Error{file_name + ":" + std::to_string(LineAt(yaml_text, i)) +
                   ": not a text file (control byte " + hex + " at offset " + std::to_string(i) +
                   ")"};
    }
  }
  try {
    std::vector<YAML::Node> documents = YAML::LoadAll(yaml_text);
    if (documents.empty() || documents[0].IsNull()) {
      return Error{file_name + ":1: the file holds no table (only comments or blank lines)"};
    }
    for (size_t i = 1; i < documents.size(); ++i) {
      if (documents[i].IsNull()) continue;  // a stray `---` or `...` at the end is harmless
      return Error{file_name + ":" + std::to_string(std::max(1, documents[i].Mark().line + 1)) +
                   ": a second YAML document; a table file holds one"};
    }
    return TableParser(file_name).Parse(documents[0]);
  } catch (const YAML::Exception& e) {
    return Error{file_name + ":" + std::to_string(e.mark.line + 1) + ": invalid YAML: " + e.msg};
  } catch (const std::exception& e) {
    return Error{file_name + ": cannot read the table: " + e.what()};
  }
}

}  // namespace codedrift
