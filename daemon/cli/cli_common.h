// What every `codedrift` subcommand shares: exit codes, error printing, the symbol options of
// train and inspect, and JSON output.
#pragma once

#include <optional>
#include <string>

#include <CLI/CLI.hpp>
#include <nlohmann/json.hpp>

#include "codedrift/code_table.h"
#include "codedrift/result.h"

#include "stream_counts.h"

namespace codedrift::cli {

// Exit codes (DESIGN.md section 5).
inline constexpr int kExitOk = 0;
inline constexpr int kExitInvalidInput = 1;  // a bad table or capture
inline constexpr int kExitUsage = 2;         // a bad command line

// Prints "codedrift COMMAND: MESSAGE" to stderr.
void PrintError(const std::string& command, const std::string& message);
void PrintWarning(const std::string& command, const std::string& message);

// The flags that choose symbols (train, inspect). Plain value type.
struct SymbolFlags {
  std::string symbols;  // "bytes" | "tokens"; empty: not given
  int block = 0;        // 0: not given (1, or the table's block)
  std::string delimiters = TokenOptions{}.delimiters;
  bool mask_digits = false;
  uint32_t max_distinct = TokenOptions{}.max_distinct;  // tokens; bytes with block 3..4
  bool max_distinct_given = false;                      // refused where it would change nothing
  int threads = 0;  // 0: one per hardware thread (the counting passes use at most 2)
};
void AddSymbolFlags(CLI::App& command, SymbolFlags& flags);

// Threads the counting pass may use.
int CountingThreads(const SymbolFlags& flags);

// The symbol source the flags ask for. With a table, the table's alphabet decides when
// --symbols is not given, and must agree with the flags when it is.
Result<SymbolSource> ResolveSymbolSource(const SymbolFlags& flags, const CodeTable* table);

// Pretty JSON with a final newline, keys in the order they were set. Token text that is not valid
// UTF-8 is written with U+FFFD in place of the bad bytes (JSON strings must be Unicode).
std::string DumpJson(const nlohmann::ordered_json& value);

// Registration of each subcommand: adds it to `app` and makes it store its exit code in
// `exit_code` when it runs.
void AddTrainCommand(CLI::App& app, int& exit_code);
void AddCheckCommand(CLI::App& app, int& exit_code);
void AddCodesCommand(CLI::App& app, int& exit_code);
void AddInspectCommand(CLI::App& app, int& exit_code);
void AddReplayCommand(CLI::App& app, int& exit_code);

}  // namespace codedrift::cli
