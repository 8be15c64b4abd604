// The sections of a code table (escape, lengths, bits, frequencies, counts, metadata), each
// checked against the kind and alphabet already read.
#include <cstdint>
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

namespace codedrift::table_parse {

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
                                std::string(CodeKindName(table_.kind)) + " (its escape has '" +
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

}  // namespace codedrift::table_parse
