// `codedrift inspect`: what a capture's symbols need (entropy, block entropies), what optimal
// and practical codes spend on them, and, with --table, how far a deployed code sits above.
#include <cmath>
#include <fstream>
#include <iostream>
#include <memory>
#include <optional>
#include <set>
#include <system_error>
#include <thread>

#include "codedrift/entropy.h"
#include "codedrift/huffman.h"

#include "capture_reader.h"
#include "cli_common.h"
#include "deflate_measure.h"
#include "inspect_report.h"
#include "progress.h"
#include "stream_counts.h"
#include "svg_chart.h"
#include "text_table.h"

namespace codedrift::cli {
namespace {

constexpr char kCommand[] = "inspect";
constexpr size_t kTopDrift = 10;

struct InspectOptions {
  std::vector<std::string> files;
  SymbolFlags symbols;
  std::string table_path;
  std::vector<int> orders{1};
  int max_length = 15;
  bool json = false;
  std::string svg_path;
  uint64_t deflate_budget_mib = kDefaultDeflateBudgetBytes >> 20;
};

int FixedLengthBits(uint64_t distinct) {
  int bits = 0;
  while (bits < 64 && (uint64_t{1} << bits) < distinct) ++bits;
  return bits;
}

std::string TooFewWarning(const std::string& what, uint64_t n, uint64_t k) {
  return what + ": " + std::to_string(n) + " observations of " + std::to_string(k) +
         " distinct values (fewer than 10 each), so the estimate is rough and biased low";
}

// Order-1 figures: entropy estimators and the optimal codes for the observed symbols.
void AddSymbolFigures(const StreamCounts& counts, const InspectOptions& options,
                      InspectReport& report) {
  const std::vector<uint64_t> values = counts.all.Values();
  const EntropyEstimate estimate = EstimateEntropy(values);
  report.symbols = estimate.symbols;
  report.distinct = estimate.distinct;
  report.entropy_bits = estimate.plugin_bits;
  report.entropy_mm_bits = estimate.miller_madow_bits;
  report.entropy_stderr_bits = estimate.stderr_bits;
  report.fixed_length_bits = FixedLengthBits(estimate.distinct);
  const double n = static_cast<double>(estimate.symbols);
  report.huffman_mean_bits = static_cast<double>(CodeCostBits(values, HuffmanLengths(values))) / n;
  report.max_length = options.max_length;
  auto limited = LimitedHuffmanLengths(values, options.max_length);
  if (limited.ok()) {
    report.huffman_limited_mean_bits =
        static_cast<double>(CodeCostBits(values, limited.value())) / n;
  } else {
    report.warnings.push_back("no code with lengths <= " + std::to_string(options.max_length) +
                              ": " + limited.error().message);
  }
  if (TooFewSymbols(estimate.symbols, estimate.distinct)) {
    report.warnings.push_back(TooFewWarning("symbols", estimate.symbols, estimate.distinct));
  }
  if (counts.all.alphabet().HasOverflowSymbol()) {
    const uint64_t overflow = counts.all.Count(SymbolKey(kOverflowToken));
    const char* what = counts.all.alphabet().kind == AlphabetKind::kTokens ? " tokens" : " symbols";
    if (overflow > 0) {
      report.warnings.push_back("--max-distinct reached: " + std::to_string(overflow) + what +
                                " were counted as the overflow symbol \"\"");
    }
  }
}

void AddBlockFigures(const StreamCounts& counts, const std::set<int>& asked,
                     InspectReport& report) {
  for (const auto& [order, block] : counts.orders) {
    const bool shown = asked.contains(order);
    if (shown && block.blocks > 0) {
      report.block_entropy_bits[order] = block.block_entropy_bits / order;
    }
    if (order > 1 && (shown || order == 2) && TooFewSymbols(block.blocks, block.distinct)) {
      report.warnings.push_back(TooFewWarning("order " + std::to_string(order) + " blocks",
                                              block.blocks, block.distinct));
    }
  }
  const auto pairs = counts.orders.find(2);
  if (pairs != counts.orders.end() && pairs->second.blocks > 0) {
    report.conditional_entropy_bits =
        pairs->second.block_entropy_bits - counts.orders.at(1).block_entropy_bits;
  }
}

TableReport TableFigures(const CodeTable& table, const std::string& path,
                         const StreamCounts& counts, double entropy_bits,
                         std::vector<std::string>& warnings) {
  TableReport out;
  out.path = path;
  const TableFit fit = EvaluateTable(table, counts.all, kTopDrift);
  out.deployed_mean_bits = fit.deployed_mean_bits;
  if (fit.deployed_mean_bits) out.redundancy_bits = *fit.deployed_mean_bits - entropy_bits;
  out.kraft_sum = fit.kraft_sum;
  out.unknown_symbols = fit.unknown_symbols;
  if (!fit.deployed_mean_bits && fit.unknown_symbols > 0) {
    warnings.push_back(std::to_string(fit.unknown_symbols) +
                       " occurrences of symbols the table does not cover, and it has no "
                       "escape: its mean length is undefined (deployed_mean_bits: null)");
  }
  const int literal_bits = table.escape ? table.escape->literal_bits : 8;
  const auto saving = EstimateSaving(table, counts.older, counts.newer, literal_bits);
  if (saving) {
    out.saving_ratio = saving->saving_ratio;
    out.saving_ideal_ratio = saving->ideal_saving_ratio;
    out.retrained_mean_bits = saving->retrained_mean_bits;
  } else {
    warnings.push_back(
        "no saving estimate: the table's mean length on the second half is undefined or zero");
  }
  const Alphabet& alphabet = counts.all.alphabet();
  for (const DriftEntry& entry : fit.top_drift) {
    out.top_drift.push_back({alphabet.FormatKey(entry.key), DisplayKey(alphabet, entry.key),
                             entry.probability, entry.cost_bits, entry.share_bits});
  }
  return out;
}

LengthChart MakeChart(const StreamCounts& counts, const CodeTable* table,
                      const std::string& table_path) {
  LengthChart chart;
  const Alphabet& alphabet = counts.all.alphabet();
  const auto sorted = counts.all.Sorted();
  const double n = static_cast<double>(counts.all.total());
  if (table != nullptr) {
    chart.title = "Deployed code " + table_path + " on this capture";
    chart.length_caption = "deployed codeword length (bits)";
    const TableCosts costs(*table);
    for (const auto& [key, count] : sorted) {
      const auto cost = costs.CostBits(key);
      if (!cost) continue;  // uncovered and no escape: no length to show
      chart.points.push_back(
          {static_cast<double>(count) / n, *cost, !costs.Covers(key), DisplayKey(alphabet, key)});
    }
    return chart;
  }
  chart.title = "Huffman code of this capture";
  chart.length_caption = "Huffman codeword length (bits)";
  std::vector<uint64_t> values;
  for (const auto& entry : sorted) values.push_back(entry.second);
  const std::vector<int> lengths = HuffmanLengths(values);
  for (size_t i = 0; i < sorted.size(); ++i) {
    chart.points.push_back({static_cast<double>(values[i]) / n, static_cast<double>(lengths[i]),
                            false, DisplayKey(alphabet, sorted[i].first)});
  }
  return chart;
}

int RunInspect(const InspectOptions& options) {
  std::unique_ptr<CodeTable> table;
  if (!options.table_path.empty()) {
    auto loaded = LoadCodeTable(options.table_path);
    if (!loaded.ok()) {
      PrintError(kCommand, loaded.error().message);
      return kExitInvalidInput;
    }
    table = std::make_unique<CodeTable>(std::move(loaded).value());
  }
  auto source = ResolveSymbolSource(options.symbols, table.get());
  if (!source.ok()) {
    PrintError(kCommand, source.error().message);
    return kExitUsage;
  }
  auto stream = CaptureStream::OpenToCount(options.files);
  if (!stream.ok()) {
    PrintError(kCommand, stream.error().message);
    return kExitInvalidInput;
  }

  // zlib manages tens of MB/s, far below counting, so its sample is compressed on threads of
  // its own while the counting pass runs (the jthread joins on every return path).
  const bool deflate_wanted =
      source.value().alphabet.kind == AlphabetKind::kBytes && options.deflate_budget_mib > 0;
  std::optional<Result<DeflateMeasure>> deflate;
  std::jthread deflate_thread;
  if (deflate_wanted) {
    try {
      deflate_thread = std::jthread([&] {
        deflate = MeasureDeflate(stream.value(), options.deflate_budget_mib << 20,
                                 CountingThreads(options.symbols));
      });
    } catch (const std::system_error&) {
      // Measured after counting below, on this thread.
    }
  }

  const std::set<int> asked(options.orders.begin(), options.orders.end());
  std::set<int> counted = asked;
  counted.insert({1, 2});  // order 2 always: it gives conditional_entropy_bits
  StreamCounts counts;
  {
    Progress progress("counting", stream.value().size());
    auto result = CountStream(stream.value(), source.value(), counted,
                              CountingThreads(options.symbols), &progress);
    if (!result.ok()) {
      PrintError(kCommand, result.error().message);
      return kExitInvalidInput;
    }
    counts = std::move(result).value();
  }
  if (counts.all.total() == 0) {
    PrintError(kCommand, "no symbols: " + std::to_string(counts.bytes) + " bytes hold no whole " +
                             source.value().alphabet.ToString() + " symbol");
    return kExitInvalidInput;
  }

  InspectReport report;
  report.alphabet = source.value().alphabet;
  report.bytes = counts.bytes;
  AddSymbolFigures(counts, options, report);
  AddBlockFigures(counts, asked, report);
  if (deflate_wanted) {
    if (deflate_thread.joinable()) deflate_thread.join();
    if (!deflate) deflate = MeasureDeflate(stream.value(), options.deflate_budget_mib << 20);
    if (!deflate->ok()) {
      PrintError(kCommand, deflate->error().message);
      return kExitInvalidInput;
    }
    report.deflate_sampled_bytes = deflate->value().sampled_bytes;
    report.deflate_bits = deflate->value().BitsPerByte() * report.alphabet.block;
  }
  if (table) {
    report.table =
        TableFigures(*table, options.table_path, counts, report.entropy_bits, report.warnings);
  }

  if (!options.svg_path.empty()) {
    std::ofstream svg(options.svg_path, std::ios::binary | std::ios::trunc);
    svg << RenderLengthChart(MakeChart(counts, table.get(), options.table_path));
    svg.close();
    if (!svg) {
      PrintError(kCommand, options.svg_path + ": cannot write the chart");
      return kExitInvalidInput;
    }
  }
  if (options.json) {
    std::cout << DumpJson(InspectJson(report));
  } else {
    for (const std::string& warning : report.warnings) PrintWarning(kCommand, warning);
    std::cout << InspectText(report);
  }
  return kExitOk;
}

}  // namespace

void AddInspectCommand(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<InspectOptions>();
  CLI::App* command = app.add_subcommand(
      "inspect",
      "Measure a capture: entropy, block entropies, optimal and practical code lengths, and "
      "with --table the deployed code's redundancy and the saving of a retrained code.");
  command->footer(
      "The files form one symbol stream, in the order given. bytes: every byte counts, "
      "newlines included. tokens: each line is a record, split on --delimiters and ended by "
      "the end-of-record symbol \"\\n\"; a file's unterminated last line is still a record.\n"
      "Block orders: H(S^n)/n over non-overlapping n-symbol blocks taken from the start of the "
      "stream. Order 2 is always counted, whatever --orders says, because "
      "conditional_entropy_bits = H(S^2) - H(S) needs it.\n"
      "huffman_mean_bits and huffman_limited_mean_bits are optimal codes for the observed "
      "symbols only (no escape). deflate_bits (bytes only): zlib level 6, raw deflate; a "
      "stream over the --deflate-budget is sampled in evenly spaced 1 MiB blocks, each "
      "compressed on its own; deflate_sampled_bytes says how many bytes were compressed.\n"
      "With --table: saving_ratio trains on the stream's first half (by bytes) and measures on "
      "the second. Warnings (too few observations for an estimate, ...) go to stderr, or into "
      "\"warnings\" with --json.\n"
      "Exit codes: 0 ok, 1 invalid input (table, capture, empty input), 2 usage error.");
  command->add_option("files", options->files, "Capture files (one stream)")->required();
  AddSymbolFlags(*command, options->symbols);
  command->add_option("--table", options->table_path, "Deployed code table to evaluate");
  command
      ->add_option("--orders", options->orders,
                   "Block entropy orders to report, comma-separated (1..4; default 1)")
      ->delimiter(',')
      ->allow_extra_args(false)
      ->check(CLI::Range(1, 4));
  command
      ->add_option("--max-length", options->max_length,
                   "Longest codeword for huffman_limited_mean_bits (default 15)")
      ->check(CLI::Range(1, 32));
  command->add_flag("--json", options->json, "Print one JSON object (keys: DESIGN.md section 5)");
  command->add_option("--svg", options->svg_path,
                      "Also write an SVG chart: probability vs codeword length");
  command
      ->add_option("--deflate-budget", options->deflate_budget_mib,
                   "MiB of the stream zlib may compress for deflate_bits (default 32; 0 skips "
                   "deflate: deflate_bits null)")
      ->check(CLI::Range(uint64_t{0}, uint64_t{1} << 20));
  command->callback([options, &exit_code] { exit_code = RunInspect(*options); });
}

}  // namespace codedrift::cli
