// The code-table YAML reader's internals: a parser over one yaml-cpp document that turns the
// first problem it meets into "file:line: reason". Private to the library.
#pragma once

#include <cstdint>
#include <map>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include <yaml-cpp/yaml.h>

#include "codedrift/code_table.h"

namespace codedrift::table_parse {

inline constexpr std::string_view kEscapeKeys[] = {"length", "frequency", "literal_bits"};

// "a mapping", "a sequence", "a scalar" or "nothing", for messages.
std::string_view NodeKindName(const YAML::Node& node);
// "unknown key 'x'<where>" with a did-you-mean, or the list of known keys when none is close.
std::string UnknownKeyMessage(std::string_view where, std::string_view key,
                              std::span<const std::string_view> known);

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

}  // namespace codedrift::table_parse
