// Reading code-table YAML (DESIGN.md section 5): every rejection names file, line and reason.
#include <algorithm>
#include <cstdint>
#include <cstdio>
#include <exception>
#include <limits>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <yaml-cpp/yaml.h>

#include "codedrift/canonical_code.h"
#include "codedrift/code_table.h"

#include "code_table_parser.h"
#include "code_table_text.h"
#include "yaml_documents.h"

namespace codedrift {
namespace {

using table_parse::Entry;
using table_parse::NodeKindName;
using table_parse::TableParser;

constexpr int kFormatVersion = 1;

constexpr std::string_view kTopKeys[] = {"table",          "alphabet", "kind",    "max_length",
                                         "escape",         "lengths",  "bits",    "frequencies",
                                         "precision_bits", "counts",   "metadata"};

// The kind a kind-specific key belongs to; nullopt for keys every kind accepts.
std::optional<CodeKind> OwnerKind(std::string_view key) {
  if (key == "lengths") return CodeKind::kPrefix;
  if (key == "bits") return CodeKind::kFixed;
  if (key == "frequencies" || key == "precision_bits") return CodeKind::kFrequencies;
  return std::nullopt;
}

}  // namespace

namespace table_parse {

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
      return At(entry.line, "'" + name + "' belongs to kind " + std::string(CodeKindName(*owner)) +
                                ", but this table is kind " +
                                std::string(CodeKindName(table_.kind)));
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
                             std::string(CodeKindName(table_.kind)) + ")");
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

}  // namespace table_parse

namespace {

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
    // Not YAML::LoadAll: it never returns on a stray ',' (see yaml_documents.h).
    const YamlDocuments documents = ReadYamlDocuments(yaml_text);
    if (documents.stray_token) {
      const size_t at = static_cast<size_t>(std::max(0, documents.stray_token->pos));
      return Error{file_name + ":" + std::to_string(std::max(1, documents.stray_token->line + 1)) +
                   ": invalid YAML: unexpected '" +
                   (at < yaml_text.size() ? yaml_text.substr(at, 1) : "") + "'"};
    }
    if (!documents.first.IsDefined() || documents.first.IsNull()) {
      return Error{file_name + ":1: the file holds no table (only comments or blank lines)"};
    }
    if (documents.second_document) {  // a stray `---` or `...` at the end is harmless
      return Error{file_name + ":" +
                   std::to_string(std::max(1, documents.second_document->line + 1)) +
                   ": a second YAML document; a table file holds one"};
    }
    return table_parse::TableParser(file_name).Parse(documents.first);
  } catch (const YAML::Exception& e) {
    return Error{file_name + ":" + std::to_string(std::max(1, e.mark.line + 1)) +
                 ": invalid YAML: " + e.msg};
  } catch (const std::exception& e) {
    return Error{file_name + ": cannot read the table: " + e.what()};
  }
}

}  // namespace codedrift