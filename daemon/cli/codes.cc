// `codedrift codes`: the canonical codewords of a prefix table, as an encoder would build them.
#include <iostream>
#include <memory>

#include "codedrift/canonical_code.h"

#include "cli_common.h"
#include "table_describe.h"
#include "text_table.h"

namespace codedrift::cli {
namespace {

constexpr char kCommand[] = "codes";
constexpr char kEscapeSymbol[] = "escape";

struct CodesOptions {
  std::string table_path;
  bool json = false;
};

int RunCodes(const CodesOptions& options) {
  auto loaded = LoadCodeTable(options.table_path);
  if (!loaded.ok()) {
    PrintError(kCommand, loaded.error().message);
    return kExitInvalidInput;
  }
  const CodeTable& table = loaded.value();
  if (table.kind != CodeKind::kPrefix) {
    PrintError(kCommand, options.table_path + ": a " + std::string(CodeKindName(table.kind)) +
                             " table has no codeword lengths; codes needs a prefix table");
    return kExitInvalidInput;
  }
  // Symbol-key order (std::map order), then the escape: the order ties are broken in.
  std::vector<int> lengths;
  lengths.reserve(table.lengths.size() + 1);
  for (const auto& entry : table.lengths) lengths.push_back(entry.second);
  if (table.escape) lengths.push_back(table.escape->length);
  const std::vector<Codeword> codewords = CanonicalCodewords(lengths);

  nlohmann::ordered_json json = nlohmann::ordered_json::array();
  TextTable rows({Align::kLeft, Align::kRight, Align::kLeft});
  rows.AddRow({"symbol", "length", "code"});
  size_t i = 0;
  for (const auto& [key, length] : table.lengths) {
    const std::string code = codewords[i++].ToString();
    if (options.json) {
      json.push_back(
          {{"symbol", table.alphabet.FormatKey(key)}, {"length", length}, {"code", code}});
    } else {
      rows.AddRow({DisplayKey(table.alphabet, key), std::to_string(length), code});
    }
  }
  if (table.escape) {
    const std::string code = codewords[i].ToString();
    if (options.json) {
      json.push_back({{"symbol", kEscapeSymbol},
                      {"length", table.escape->length},
                      {"code", code},
                      {"escape", true}});
    } else {
      rows.AddRow({kEscapeSymbol, std::to_string(table.escape->length), code});
    }
  }
  std::cout << (options.json ? DumpJson(json) : rows.Render());
  const std::string problem = CoverageProblem(table);
  if (!problem.empty()) {
    PrintWarning(kCommand, options.table_path + ": " + problem);
  }
  return kExitOk;
}

}  // namespace

void AddCodesCommand(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<CodesOptions>();
  CLI::App* command =
      app.add_subcommand("codes", "Print the canonical codewords of a prefix code table.");
  command->footer(
      "Codewords follow the canonical rule of RFC 1951 section 3.2.2: shorter lengths first, "
      "ties in symbol order. Symbol order is the order of the symbols' keys as bytes (bytes: "
      "by value; tokens: by their text, byte by byte), and the escape comes last, after every "
      "symbol, listed as \"escape\" (in JSON also with \"escape\": true, so a token named "
      "escape stays distinct).\n"
      "JSON: [{\"symbol\", \"length\", \"code\"}], code a string of '0' and '1'.\n"
      "Exit codes: 0 ok, 1 invalid or non-prefix table, 2 usage error.");
  command->add_option("table", options->table_path, "Code table file")->required();
  command->add_flag("--json", options->json, "Print a JSON array");
  command->callback([options, &exit_code] { exit_code = RunCodes(*options); });
}

}  // namespace codedrift::cli
