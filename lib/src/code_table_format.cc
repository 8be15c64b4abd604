// Writing the canonical text of a code table: fixed key order, symbols sorted, one per line,
// so that tables diff cleanly and ParseCodeTable reads back exactly what was written.
#include <string>

#include "codedrift/code_table.h"

#include "code_table_text.h"

namespace codedrift {
namespace {

// Appends `name:` and the entries one per line, or `name: {}` when there are none.
template <class Map, class Format>
void AppendSection(std::string& out, std::string_view name, const Map& entries, Format format) {
  out += name;
  if (entries.empty()) {
    out += ": {}\n";
    return;
  }
  out += ":\n";
  for (const auto& [key, value] : entries) {
    out += "  ";
    out += format(key);
    out += ": ";
    out += std::to_string(value);
    out += '\n';
  }
}

}  // namespace

std::string_view CodeKindName(CodeKind kind) {
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

std::string QuoteToken(std::string_view token) { return table_text::DoubleQuoted(token); }

std::string FormatCodeTable(const CodeTable& table) {
  const Alphabet& alphabet = table.alphabet;
  auto symbol = [&alphabet](const SymbolKey& key) {
    return table_text::Scalar(alphabet.FormatKey(key));
  };
  std::string out = "# codedrift code table\n";
  out += "table: 1\n";
  out += "alphabet: " + alphabet.ToString() + "\n";
  out += "kind: ";
  out += CodeKindName(table.kind);
  out += "\n";
  out += "max_length: " + std::to_string(table.max_length) + "\n";
  if (table.escape && table.kind == CodeKind::kPrefix) {
    out += "escape: {length: " + std::to_string(table.escape->length) +
           ", literal_bits: " + std::to_string(table.escape->literal_bits) + "}\n";
  }
  if (table.escape && table.kind == CodeKind::kFrequencies) {
    out += "escape: {frequency: " + std::to_string(table.escape_frequency) +
           ", literal_bits: " + std::to_string(table.escape->literal_bits) + "}\n";
  }
  switch (table.kind) {
    case CodeKind::kPrefix:
      AppendSection(out, "lengths", table.lengths, symbol);
      break;
    case CodeKind::kFixed:
      out += "bits: " + std::to_string(table.fixed_bits) + "\n";
      break;
    case CodeKind::kFrequencies:
      out += "precision_bits: " + std::to_string(table.precision_bits) + "\n";
      AppendSection(out, "frequencies", table.frequencies, symbol);
      break;
  }
  if (table.training_counts) {
    AppendSection(out, "counts", table.training_counts->Sorted(), symbol);
  }
  if (!table.metadata.empty()) {
    out += "metadata:\n";
    for (const auto& [key, value] : table.metadata) {
      out += "  " + table_text::Scalar(key) + ": " + table_text::DoubleQuoted(value) + "\n";
    }
  }
  return out;
}

}  // namespace codedrift
