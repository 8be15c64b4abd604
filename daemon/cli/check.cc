// `codedrift check`: loads a code table the way the daemon will and says whether it is valid,
// with its Kraft sum.
#include <iostream>
#include <memory>

#include "codedrift/canonical_code.h"

#include "cli_common.h"
#include "table_describe.h"
#include "text_table.h"

namespace codedrift::cli {
namespace {

constexpr char kCommand[] = "check";

std::string SymbolCount(const CodeTable& table) {
  switch (table.kind) {
    case CodeKind::kPrefix:
      return std::to_string(table.lengths.size());
    case CodeKind::kFrequencies:
      return std::to_string(table.frequencies.size());
    case CodeKind::kFixed:
      return std::to_string(table.alphabet.Size());
  }
  return "?";
}

// Prefix tables: exact (integer) Kraft sum over the codewords and the escape.
std::string KraftText(const CodeTable& table) {
  if (table.kind != CodeKind::kPrefix) return FormatNumber(table.KraftSumValue(), 9);
  std::vector<int> lengths;
  for (const auto& entry : table.lengths) lengths.push_back(entry.second);
  if (table.escape) lengths.push_back(table.escape->length);
  const KraftSum sum = ComputeKraftSum(lengths);
  if (sum.complete()) return "1 (complete)";
  return FormatNumber(sum.value(), 9) + " (incomplete: some codewords are unused)";
}

std::string EscapeText(const CodeTable& table) {
  if (!table.escape) return "none";
  if (table.kind == CodeKind::kFrequencies) {
    return "frequency " + std::to_string(table.escape_frequency) + ", " +
           std::to_string(table.escape->literal_bits) + " bits per literal unit";
  }
  return std::to_string(table.escape->length) + " bits, " +
         std::to_string(table.escape->literal_bits) + " bits per literal unit";
}

struct CheckOptions {
  std::string table_path;
};

int RunCheck(const CheckOptions& options) {
  auto loaded = LoadCodeTable(options.table_path);
  if (!loaded.ok()) {
    PrintError(kCommand, loaded.error().message);
    return kExitInvalidInput;
  }
  const CodeTable& table = loaded.value();
  TextTable rows({Align::kLeft, Align::kLeft});
  rows.AddRow({"table", options.table_path});
  rows.AddRow({"kind", std::string(CodeKindName(table.kind))});
  rows.AddRow({"alphabet", table.alphabet.ToString()});
  rows.AddRow({"symbols", SymbolCount(table)});
  if (table.kind == CodeKind::kFixed) {
    rows.AddRow({"bits", std::to_string(table.fixed_bits)});
  } else {
    rows.AddRow({"escape", EscapeText(table)});
  }
  if (table.kind == CodeKind::kPrefix)
    rows.AddRow({"max_length", std::to_string(table.max_length)});
  if (table.kind == CodeKind::kFrequencies && table.precision_bits > 0) {
    rows.AddRow({"precision_bits", std::to_string(table.precision_bits)});
  }
  rows.AddRow({"kraft_sum", KraftText(table)});
  if (table.training_counts) {
    rows.AddRow({"training counts", std::to_string(table.training_counts->total()) + " symbols"});
  }
  std::cout << rows.Render();
  const std::string problem = CoverageProblem(table);
  if (!problem.empty()) PrintWarning(kCommand, options.table_path + ": " + problem);
  return kExitOk;
}

}  // namespace

void AddCheckCommand(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<CheckOptions>();
  CLI::App* command = app.add_subcommand("check", "Validate a code table and print its Kraft sum.");
  command->footer(
      "Exit codes: 0 valid (a table that covers only part of its alphabet and has no escape "
      "is valid, with a warning on stderr), 1 invalid, with FILE:LINE: reason on stderr, 2 "
      "usage error.");
  command->add_option("table", options->table_path, "Code table file")->required();
  command->callback([options, &exit_code] { exit_code = RunCheck(*options); });
}

}  // namespace codedrift::cli
