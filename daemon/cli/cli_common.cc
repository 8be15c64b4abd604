#include "cli_common.h"

#include <algorithm>
#include <iostream>
#include <thread>

namespace codedrift::cli {

void PrintError(const std::string& command, const std::string& message) {
  std::cerr << "codedrift " << command << ": " << message << '\n';
}

void PrintWarning(const std::string& command, const std::string& message) {
  std::cerr << "codedrift " << command << ": warning: " << message << '\n';
}

void AddSymbolFlags(CLI::App& command, SymbolFlags& flags) {
  command.add_option("--symbols", flags.symbols, "Symbols: bytes (default) or tokens")
      ->check(CLI::IsMember({"bytes", "tokens"}));
  command
      .add_option("--block", flags.block,
                  "bytes: count n-byte blocks as symbols (1..4), taken back to back from the "
                  "start of the stream")
      ->check(CLI::Range(1, 4));
  command.add_option("--delimiters", flags.delimiters,
                     "tokens: characters that separate tokens (newline always does)");
  command.add_flag("--mask-digits", flags.mask_digits,
                   "tokens: map every ASCII digit to 0 before counting");
  command
      .add_option("--max-distinct", flags.max_distinct,
                  "tokens, and bytes with --block 3 or 4: distinct symbols kept; later new "
                  "ones share the overflow symbol \"\"")
      ->check(CLI::Range(1u, 1u << 30))
      ->each([&flags](const std::string&) { flags.max_distinct_given = true; });
  command
      .add_option("--threads", flags.threads,
                  "Threads for counting (default: one per core; at most 2 are used). The "
                  "figures do not depend on it")
      ->check(CLI::Range(1, 1024));
}

int CountingThreads(const SymbolFlags& flags) {
  if (flags.threads > 0) return flags.threads;
  return static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
}

Result<SymbolSource> ResolveSymbolSource(const SymbolFlags& flags, const CodeTable* table) {
  SymbolSource source;
  source.tokens.delimiters = flags.delimiters;
  source.tokens.mask_digits = flags.mask_digits;
  source.tokens.max_distinct = flags.max_distinct;
  source.bytes.max_distinct = flags.max_distinct;
  if (table != nullptr && table->alphabet.kind == AlphabetKind::kField) {
    return Error{"the table's alphabet is " + table->alphabet.ToString() +
                 "; the CLI reads bytes or tokens only (fields are the daemon's)"};
  }
  std::string symbols = flags.symbols;
  if (symbols.empty()) {
    symbols =
        table != nullptr && table->alphabet.kind == AlphabetKind::kTokens ? "tokens" : "bytes";
  }
  if (symbols == "tokens") {
    if (flags.block > 1) return Error{"--block applies to bytes only"};
    source.alphabet = Alphabet::Tokens();
  } else {
    int block = flags.block;
    if (block == 0) block = table != nullptr ? table->alphabet.block : 1;
    source.alphabet = Alphabet::Bytes(block);
  }
  if (flags.max_distinct_given && !source.alphabet.HasOverflowSymbol()) {
    return Error{"--max-distinct applies to tokens and to --block 3 or 4 (every " +
                 source.alphabet.ToString() + " symbol has an id of its own)"};
  }
  if (table != nullptr && !(table->alphabet == source.alphabet)) {
    return Error{"the table codes " + table->alphabet.ToString() + " symbols but the stream is " +
                 source.alphabet.ToString() +
                 " (leave out --symbols and --block to follow the table)"};
  }
  return source;
}

std::string DumpJson(const nlohmann::ordered_json& value) {
  return value.dump(2, ' ', false, nlohmann::ordered_json::error_handler_t::replace) + "\n";
}

}  // namespace codedrift::cli
