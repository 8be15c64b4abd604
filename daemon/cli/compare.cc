// `codedrift compare`: reads the two operands (captures or code tables with training counts)
// as symbol counts of one alphabet, and reports how the distributions differ.
#include "compare.h"

#include <fstream>
#include <iostream>
#include <map>
#include <memory>
#include <optional>

#include "cli_common.h"
#include "compare_chart.h"
#include "compare_report.h"
#include "progress.h"
#include "stream_counts.h"
#include "text_table.h"

namespace codedrift::cli {
namespace {

constexpr char kCommand[] = "compare";

struct CompareOptions {
  std::string a;
  std::string b;
  SymbolFlags symbols;
  std::string table_path;
  bool json = false;
  std::string svg_path;
  size_t top = 10;
};

// One operand: a capture (counted later, once the alphabet is known) or a loaded table.
struct Operand {
  std::string path;
  std::optional<CodeTable> table;
};

// A code table file starts, after comments and blank lines, with its `table:` version key;
// a capture practically never does. Deciding on that line keeps a broken table from being
// silently counted as a capture.
bool LooksLikeCodeTable(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::string line;
  for (int lines = 0; lines < 200 && std::getline(in, line); ++lines) {
    const size_t start = line.find_first_not_of(" \t\r");
    if (start == std::string::npos || line[start] == '#') continue;
    return line.compare(start, 6, "table:") == 0;
  }
  return false;
}

// The operand, its table loaded when it is one; errors name the file.
Result<Operand> ReadOperand(const std::string& path) {
  Operand operand{path, std::nullopt};
  if (!LooksLikeCodeTable(path)) return operand;
  auto table = LoadCodeTable(path);
  if (!table.ok()) return table.error();
  if (!table.value().training_counts || table.value().training_counts->total() == 0) {
    return Error{path + ": the code table has no training counts (a `counts:` section) to " +
                 "compare"};
  }
  operand.table = std::move(table).value();
  return operand;
}

Result<SymbolCounts> CountOperand(const Operand& operand, const SymbolSource& source,
                                  const SymbolFlags& flags) {
  if (operand.table) return *operand.table->training_counts;
  auto stream = CaptureStream::Open({operand.path});
  if (!stream.ok()) return stream.error();
  if (stream.value().size() == 0) {
    return Error{operand.path + ": no symbols: the capture is empty (0 bytes)"};
  }
  Progress progress("counting " + operand.path, stream.value().size());
  auto counts = CountStream(stream.value(), source, {1}, CountingThreads(flags), &progress);
  if (!counts.ok()) return counts.error();
  if (counts.value().all.total() == 0) {
    return Error{operand.path + ": no symbols: " + std::to_string(counts.value().bytes) +
                 " bytes hold no whole " + source.alphabet.ToString() + " symbol"};
  }
  return std::move(counts.value().all);
}

DistributionChart MakeChart(const SymbolCounts& a, const SymbolCounts& b,
                            const CompareOptions& options) {
  DistributionChart chart;
  chart.title = "Symbol distributions: A vs B (" + a.alphabet().ToString() + ")";
  chart.name_a = "A: " + options.a;
  chart.name_b = "B: " + options.b;
  std::map<SymbolKey, DistributionBar> bars;
  const double n_a = static_cast<double>(a.total());
  const double n_b = static_cast<double>(b.total());
  for (const auto& [key, count] : a.map()) {
    bars[key].probability_a = static_cast<double>(count) / n_a;
  }
  for (const auto& [key, count] : b.map()) {
    bars[key].probability_b = static_cast<double>(count) / n_b;
  }
  for (auto& [key, bar] : bars) {
    bar.label = DisplayKey(a.alphabet(), key);
    chart.bars.push_back(bar);
  }
  return chart;
}

int RunCompare(const CompareOptions& options) {
  std::optional<CodeTable> flag_table;
  if (!options.table_path.empty()) {
    auto loaded = LoadCodeTable(options.table_path);
    if (!loaded.ok()) {
      PrintError(kCommand, loaded.error().message);
      return kExitInvalidInput;
    }
    flag_table = std::move(loaded).value();
  }
  Operand operands[2];
  for (int i = 0; i < 2; ++i) {
    auto operand = ReadOperand(i == 0 ? options.a : options.b);
    if (!operand.ok()) {
      PrintError(kCommand, operand.error().message);
      return kExitInvalidInput;
    }
    operands[i] = std::move(operand).value();
  }

  // The mean lengths are under --table, else under the first operand that is a table; that
  // table also settles the alphabet when --symbols is not given.
  const CodeTable* code = flag_table ? &*flag_table : nullptr;
  std::string code_path = options.table_path;
  for (const Operand& operand : operands) {
    if (code == nullptr && operand.table) {
      code = &*operand.table;
      code_path = operand.path;
    }
  }
  auto source = ResolveSymbolSource(options.symbols, code);
  if (!source.ok()) {
    PrintError(kCommand, source.error().message);
    return kExitUsage;
  }
  const Alphabet& alphabet = source.value().alphabet;
  for (const Operand& operand : operands) {
    if (operand.table && !(operand.table->alphabet == alphabet)) {
      PrintError(kCommand, operand.path + " counts " + operand.table->alphabet.ToString() +
                               " symbols but the comparison is of " + alphabet.ToString() +
                               " symbols");
      return kExitUsage;
    }
  }

  std::optional<SymbolCounts> counts[2];
  for (int i = 0; i < 2; ++i) {
    auto counted = CountOperand(operands[i], source.value(), options.symbols);
    if (!counted.ok()) {
      PrintError(kCommand, counted.error().message);
      return kExitInvalidInput;
    }
    counts[i] = std::move(counted).value();
  }

  CompareReport report = CompareCounts(*counts[0], *counts[1], code, options.top);
  report.a.file = options.a;
  report.b.file = options.b;
  report.a.source = operands[0].table ? "table_counts" : "capture";
  report.b.source = operands[1].table ? "table_counts" : "capture";
  if (code != nullptr) {
    report.table = code_path;
    for (const CompareSide* side : {&report.a, &report.b}) {
      if (!side->deployed_mean_bits && side->unknown_symbols > 0) {
        report.warnings.push_back(
            std::string(side == &report.a ? "A" : "B") + ": " +
            std::to_string(side->unknown_symbols) +
            " occurrences of symbols the table does not cover, and it has no escape: its mean "
            "length is undefined");
      }
    }
  }

  if (!options.svg_path.empty()) {
    std::ofstream svg(options.svg_path, std::ios::binary | std::ios::trunc);
    svg << RenderDistributionChart(MakeChart(*counts[0], *counts[1], options));
    svg.close();
    if (!svg) {
      PrintError(kCommand, options.svg_path + ": cannot write the chart");
      return kExitInvalidInput;
    }
  }
  if (options.json) {
    std::cout << DumpJson(CompareJson(report));
  } else {
    for (const std::string& warning : report.warnings) PrintWarning(kCommand, warning);
    std::cout << CompareText(report);
  }
  return kExitOk;
}

}  // namespace

void AddCompareCommand(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<CompareOptions>();
  CLI::App* command = app.add_subcommand(
      "compare",
      "Put two symbol distributions side by side: two captures, or a capture and a code "
      "table's training counts. Entropies, mean lengths under a table, divergences, and the "
      "symbols whose probability moved most.");
  command->footer(
      "An operand whose first line (after comments and blank lines) is `table:` is read as a "
      "code table, and its `counts:` section (training counts) is the distribution; any other "
      "file is a capture, counted as `inspect` counts it. Count a capture with the flags the "
      "table was trained with (--delimiters, --mask-digits, ...): counts are compared as they "
      "are.\n"
      "Mean lengths are under --table, or, without it, under the code of the first operand "
      "that is a table. That table also sets the alphabet unless --symbols is given.\n"
      "total_variation = 1/2 sum |p_a - p_b|; js_divergence_bits is the Jensen-Shannon "
      "divergence (log base 2, 0..1); relative_entropy_a_b_bits is D(A || B) = sum p_a "
      "log2(p_a / p_b), null (\"infinite\") when A has a symbol B never shows. top_moved "
      "ranks symbols by |p_b - p_a|, ties in symbol order, and leaves out unchanged ones.\n"
      "Exit codes: 0 ok, 1 invalid input (table, capture, empty input), 2 usage error.");
  command->add_option("a", options->a, "First capture or code table (A)")->required();
  command->add_option("b", options->b, "Second capture or code table (B)")->required();
  AddSymbolFlags(*command, options->symbols);
  command->add_option("--table", options->table_path,
                      "Code table whose mean length is measured on both sides");
  command->add_flag("--json", options->json, "Print one JSON object");
  command->add_option("--svg", options->svg_path,
                      "Also write an SVG bar chart of both distributions");
  command->add_option("--top", options->top, "Symbols listed in top_moved (default 10)")
      ->check(CLI::Range(size_t{1}, size_t{100000}));
  command->callback([options, &exit_code] { exit_code = RunCompare(*options); });
}

}  // namespace codedrift::cli
