// `codedrift train`: a prefix code table (length-limited Huffman plus an escape) trained on
// captures, written with its training counts so later drift can be judged against them.
#include <iostream>
#include <memory>

#include "codedrift/entropy.h"

#include "capture_reader.h"
#include "cli_common.h"
#include "progress.h"
#include "stream_counts.h"
#include "text_table.h"

namespace codedrift::cli {
namespace {

constexpr char kCommand[] = "train";

struct TrainOptions {
  std::vector<std::string> files;
  SymbolFlags symbols;
  int max_length = 15;
  int literal_bits = 8;
  std::string output;
};

int RunTrain(const TrainOptions& options) {
  auto source = ResolveSymbolSource(options.symbols, nullptr);
  if (!source.ok()) {
    PrintError(kCommand, source.error().message);
    return kExitUsage;
  }
  auto stream = CaptureStream::OpenToCount(options.files);
  if (!stream.ok()) {
    PrintError(kCommand, stream.error().message);
    return kExitInvalidInput;
  }
  StreamCounts counts;
  {
    Progress progress("counting", stream.value().size());
    auto counted = CountStream(stream.value(), source.value(), {1},
                               CountingThreads(options.symbols), &progress);
    if (!counted.ok()) {
      PrintError(kCommand, counted.error().message);
      return kExitInvalidInput;
    }
    counts = std::move(counted).value();
  }
  if (counts.all.total() == 0) {
    PrintError(kCommand, "no symbols: the input holds no whole " +
                             source.value().alphabet.ToString() + " symbol");
    return kExitInvalidInput;
  }
  auto table = TrainPrefixTable(counts.all, options.max_length, options.literal_bits);
  if (!table.ok()) {
    PrintError(kCommand, table.error().message);
    return kExitInvalidInput;
  }
  const Status saved = SaveCodeTable(table.value(), options.output);
  if (!saved.ok()) {
    PrintError(kCommand, saved.error().message);
    return kExitInvalidInput;
  }
  const TableFit fit = EvaluateTable(table.value(), counts.all, 0);
  const double entropy = PluginEntropyBits(counts.all.Values());
  std::cout << options.output << ": " << counts.all.total() << " symbols ("
            << source.value().alphabet.ToString() << "), " << counts.all.distinct()
            << " distinct, mean " << FormatNumber(fit.deployed_mean_bits.value_or(0))
            << " bits/symbol (escape " << table.value().escape->length << " bits), entropy "
            << FormatNumber(entropy) << " bits/symbol\n";
  return kExitOk;
}

}  // namespace

void AddTrainCommand(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<TrainOptions>();
  CLI::App* command = app.add_subcommand(
      "train", "Train a prefix code table on captures and write it with its training counts.");
  command->footer(
      "The files form one symbol stream (see inspect --help). The code is length-limited "
      "Huffman (package-merge) over the observed symbols plus one escape codeword, weighted by "
      "the symbols seen once, so symbols never seen stay codable as escape + literal. The "
      "summary's mean is the in-sample mean length, escape included.\n"
      "Exit codes: 0 ok, 1 invalid input (capture, or the table cannot be written), 2 usage "
      "error.");
  command->add_option("files", options->files, "Capture files (one stream)")->required();
  AddSymbolFlags(*command, options->symbols);
  command->add_option("--max-length", options->max_length, "Longest codeword (default 15)")
      ->check(CLI::Range(1, 32));
  command
      ->add_option("--literal-bits", options->literal_bits,
                   "Bits per literal unit after the escape (bytes: per byte; tokens: per "
                   "character and one for the end; default 8)")
      ->check(CLI::Range(1, 64));
  command->add_option("-o,--output", options->output, "Table file to write")->required();
  command->callback([options, &exit_code] { exit_code = RunTrain(*options); });
}

}  // namespace codedrift::cli
