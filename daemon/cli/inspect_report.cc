#include "inspect_report.h"

#include "optional_figure.h"
#include "text_table.h"

namespace codedrift::cli {
namespace {

std::string Percent(const std::optional<double>& ratio) {
  return ratio ? FormatNumber(100.0 * *ratio, 2) : "-";
}

void AddTableRows(const TableReport& table, TextTable& rows) {
  rows.AddRow({"table", table.path, ""});
  rows.AddRow({"deployed code", NumberOrDash(table.deployed_mean_bits), "bits/symbol"});
  rows.AddRow(
      {"redundancy (deployed - entropy)", NumberOrDash(table.redundancy_bits), "bits/symbol"});
  rows.AddRow({"Kraft sum", FormatNumber(table.kraft_sum, 9), ""});
  rows.AddRow({"unknown symbols", std::to_string(table.unknown_symbols), "occurrences"});
  rows.AddRow(
      {"retrained code (1st half -> 2nd)", NumberOrDash(table.retrained_mean_bits), "bits/symbol"});
  rows.AddRow({"saving, out of sample", Percent(table.saving_ratio), "%"});
  rows.AddRow({"saving, ideal bound", Percent(table.saving_ideal_ratio), "%"});
}

std::string DriftText(const TableReport& table) {
  TextTable rows({Align::kLeft, Align::kRight, Align::kRight, Align::kRight});
  rows.AddRow({"symbol", "probability", "length", "share (bits)"});
  for (const DriftRow& row : table.top_drift) {
    rows.AddRow({row.display, FormatNumber(row.probability), FormatNumber(row.length_bits, 3),
                 FormatNumber(row.share_bits)});
  }
  return rows.Render();
}

}  // namespace

nlohmann::ordered_json InspectJson(const InspectReport& report) {
  nlohmann::ordered_json json;
  json["alphabet"] = report.alphabet.ToString();
  json["bytes"] = report.bytes;
  json["symbols"] = report.symbols;
  json["distinct"] = report.distinct;
  json["entropy_bits"] = report.entropy_bits;
  json["entropy_mm_bits"] = report.entropy_mm_bits;
  json["entropy_stderr_bits"] = report.entropy_stderr_bits;
  json["fixed_length_bits"] = report.fixed_length_bits;
  json["huffman_mean_bits"] = report.huffman_mean_bits;
  json["huffman_limited_mean_bits"] = NumberOrNull(report.huffman_limited_mean_bits);
  json["max_length"] = report.max_length;
  nlohmann::ordered_json blocks = nlohmann::ordered_json::object();
  for (const auto& [order, bits] : report.block_entropy_bits) {
    blocks[std::to_string(order)] = bits;
  }
  json["block_entropy_bits"] = blocks;
  json["conditional_entropy_bits"] = NumberOrNull(report.conditional_entropy_bits);
  json["deflate_bits"] = NumberOrNull(report.deflate_bits);
  json["deflate_sampled_bytes"] = report.deflate_sampled_bytes;
  if (report.table) {
    const TableReport& table = *report.table;
    json["table"] = table.path;
    json["deployed_mean_bits"] = NumberOrNull(table.deployed_mean_bits);
    json["redundancy_bits"] = NumberOrNull(table.redundancy_bits);
    json["kraft_sum"] = table.kraft_sum;
    json["unknown_symbols"] = table.unknown_symbols;
    json["saving_ratio"] = NumberOrNull(table.saving_ratio);
    json["saving_ideal_ratio"] = NumberOrNull(table.saving_ideal_ratio);
    json["retrained_mean_bits"] = NumberOrNull(table.retrained_mean_bits);
    nlohmann::ordered_json drift = nlohmann::ordered_json::array();
    for (const DriftRow& row : table.top_drift) {
      drift.push_back({{"symbol", row.symbol},
                       {"probability", row.probability},
                       {"length", row.length_bits},
                       {"share_bits", row.share_bits}});
    }
    json["top_drift"] = drift;
  }
  json["warnings"] = report.warnings;
  return json;
}

std::string InspectText(const InspectReport& report) {
  TextTable rows({Align::kLeft, Align::kRight, Align::kLeft});
  rows.AddRow(
      {"symbols (" + report.alphabet.ToString() + ")", std::to_string(report.symbols), "symbols"});
  rows.AddRow({"distinct", std::to_string(report.distinct), "symbols"});
  rows.AddRow({"entropy (plug-in)", FormatNumber(report.entropy_bits), "bits/symbol"});
  rows.AddRow({"entropy (Miller-Madow)", FormatNumber(report.entropy_mm_bits), "bits/symbol"});
  rows.AddRow(
      {"entropy standard error (i.i.d.)", FormatNumber(report.entropy_stderr_bits), "bits/symbol"});
  rows.AddRow({"fixed-length code", std::to_string(report.fixed_length_bits), "bits/symbol"});
  rows.AddRow({"Huffman code", FormatNumber(report.huffman_mean_bits), "bits/symbol"});
  rows.AddRow({"Huffman code, lengths <= " + std::to_string(report.max_length),
               NumberOrDash(report.huffman_limited_mean_bits), "bits/symbol"});
  for (const auto& [order, bits] : report.block_entropy_bits) {
    rows.AddRow({"block entropy H(S^" + std::to_string(order) + ")/" + std::to_string(order),
                 FormatNumber(bits), "bits/symbol"});
  }
  rows.AddRow({"conditional entropy H(S^2) - H(S)", NumberOrDash(report.conditional_entropy_bits),
               "bits/symbol"});
  if (report.alphabet.kind == AlphabetKind::kBytes) {
    rows.AddRow({"deflate (zlib level 6)", NumberOrDash(report.deflate_bits), "bits/symbol"});
    rows.AddRow({"deflate sample", std::to_string(report.deflate_sampled_bytes), "bytes"});
  }
  std::string out;
  if (report.table) {
    AddTableRows(*report.table, rows);
    out = rows.Render();
    if (!report.table->top_drift.empty()) {
      out += "\ntop drift (share of the redundancy, p * (length + log2 p)):\n";
      out += DriftText(*report.table);
    }
    return out;
  }
  return rows.Render();
}

}  // namespace codedrift::cli
