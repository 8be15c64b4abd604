#include "compare_report.h"

#include <algorithm>
#include <cmath>
#include <map>

#include "codedrift/entropy.h"

#include "optional_figure.h"
#include "text_table.h"

namespace codedrift::cli {
namespace {

void FillSide(const SymbolCounts& counts, const CodeTable* table, CompareSide& side) {
  const EntropyEstimate estimate = EstimateEntropy(counts.Values());
  side.symbols = estimate.symbols;
  side.distinct = estimate.distinct;
  side.entropy_bits = estimate.plugin_bits;
  side.entropy_mm_bits = estimate.miller_madow_bits;
  side.entropy_stderr_bits = estimate.stderr_bits;
  if (table == nullptr) return;
  const TableFit fit = EvaluateTable(*table, counts, 0);
  side.deployed_mean_bits = fit.deployed_mean_bits;
  if (fit.deployed_mean_bits) side.redundancy_bits = *fit.deployed_mean_bits - side.entropy_bits;
  side.unknown_symbols = fit.unknown_symbols;
}

// p log2(p / q), with 0 log 0 = 0 (the caller keeps q > 0 wherever p > 0).
double Term(double p, double q) { return p > 0 ? p * std::log2(p / q) : 0.0; }

std::string TooFew(const std::string& side, const CompareSide& figures) {
  return side + ": " + std::to_string(figures.symbols) + " observations of " +
         std::to_string(figures.distinct) +
         " distinct values (fewer than 10 each), so its estimates are rough";
}

nlohmann::ordered_json SideJson(const CompareSide& side, bool with_table) {
  nlohmann::ordered_json json;
  json["file"] = side.file;
  json["source"] = side.source;
  json["symbols"] = side.symbols;
  json["distinct"] = side.distinct;
  json["entropy_bits"] = side.entropy_bits;
  json["entropy_mm_bits"] = side.entropy_mm_bits;
  json["entropy_stderr_bits"] = side.entropy_stderr_bits;
  if (with_table) {
    json["deployed_mean_bits"] = NumberOrNull(side.deployed_mean_bits);
    json["redundancy_bits"] = NumberOrNull(side.redundancy_bits);
    json["unknown_symbols"] = side.unknown_symbols;
  }
  return json;
}

// Difference B - A when both are defined.
std::string Change(const std::optional<double>& a, const std::optional<double>& b) {
  return a && b ? FormatNumber(*b - *a) : "-";
}

std::string SignedCount(uint64_t a, uint64_t b) {
  return b >= a ? std::to_string(b - a) : "-" + std::to_string(a - b);
}

std::string SourceWords(const std::string& source) {
  return source == "capture" ? "capture" : "training counts of a code table";
}

}  // namespace

CompareReport CompareCounts(const SymbolCounts& a, const SymbolCounts& b, const CodeTable* table,
                            size_t top) {
  CompareReport report;
  report.alphabet = a.alphabet();
  FillSide(a, table, report.a);
  FillSide(b, table, report.b);

  // Both sides' probabilities per symbol, in key order (ties in top_moved stay stable).
  std::map<SymbolKey, std::pair<double, double>> joint;
  const double n_a = static_cast<double>(a.total());
  const double n_b = static_cast<double>(b.total());
  for (const auto& [key, count] : a.map()) joint[key].first = static_cast<double>(count) / n_a;
  for (const auto& [key, count] : b.map()) joint[key].second = static_cast<double>(count) / n_b;

  double tv = 0, js = 0, d_ab = 0, d_ba = 0;
  bool ab_finite = true, ba_finite = true;
  std::vector<std::pair<SymbolKey, std::pair<double, double>>> moved;
  for (const auto& [key, p] : joint) {
    const auto [pa, pb] = p;
    if (pa > 0 && pb > 0) {
      ++report.shared_symbols;
      d_ab += Term(pa, pb);
      d_ba += Term(pb, pa);
    } else if (pa > 0) {
      ++report.only_a_symbols;
      ab_finite = false;
    } else {
      ++report.only_b_symbols;
      ba_finite = false;
    }
    tv += std::abs(pa - pb);
    const double m = 0.5 * (pa + pb);
    js += 0.5 * Term(pa, m) + 0.5 * Term(pb, m);
    if (pa != pb) moved.emplace_back(key, p);
  }
  report.total_variation = 0.5 * tv;
  report.js_divergence_bits = js;
  if (ab_finite) report.relative_entropy_a_b_bits = d_ab;
  if (ba_finite) report.relative_entropy_b_a_bits = d_ba;

  std::stable_sort(moved.begin(), moved.end(), [](const auto& x, const auto& y) {
    return std::abs(x.second.second - x.second.first) > std::abs(y.second.second - y.second.first);
  });
  if (moved.size() > top) moved.resize(top);
  for (const auto& [key, p] : moved) {
    report.top_moved.push_back(
        {report.alphabet.FormatKey(key), DisplayKey(report.alphabet, key), p.first, p.second});
  }

  if (TooFewSymbols(report.a.symbols, report.a.distinct)) {
    report.warnings.push_back(TooFew("A", report.a));
  }
  if (TooFewSymbols(report.b.symbols, report.b.distinct)) {
    report.warnings.push_back(TooFew("B", report.b));
  }
  return report;
}

nlohmann::ordered_json CompareJson(const CompareReport& report) {
  nlohmann::ordered_json json;
  json["alphabet"] = report.alphabet.ToString();
  json["table"] = report.table ? nlohmann::ordered_json(*report.table) : nullptr;
  json["a"] = SideJson(report.a, report.table.has_value());
  json["b"] = SideJson(report.b, report.table.has_value());
  json["shared_symbols"] = report.shared_symbols;
  json["only_a_symbols"] = report.only_a_symbols;
  json["only_b_symbols"] = report.only_b_symbols;
  json["total_variation"] = report.total_variation;
  json["js_divergence_bits"] = report.js_divergence_bits;
  json["relative_entropy_a_b_bits"] = NumberOrNull(report.relative_entropy_a_b_bits);
  json["relative_entropy_b_a_bits"] = NumberOrNull(report.relative_entropy_b_a_bits);
  nlohmann::ordered_json moved = nlohmann::ordered_json::array();
  for (const MovedSymbol& symbol : report.top_moved) {
    moved.push_back({{"symbol", symbol.symbol},
                     {"probability_a", symbol.probability_a},
                     {"probability_b", symbol.probability_b},
                     {"change", symbol.probability_b - symbol.probability_a}});
  }
  json["top_moved"] = moved;
  json["warnings"] = report.warnings;
  return json;
}

std::string CompareText(const CompareReport& report) {
  std::string out;
  out += "A: " + report.a.file + " (" + SourceWords(report.a.source) + ")\n";
  out += "B: " + report.b.file + " (" + SourceWords(report.b.source) + ")\n";
  if (report.table) out += "code table: " + *report.table + "\n";
  out += "\n";

  TextTable sides({Align::kLeft, Align::kRight, Align::kRight, Align::kRight, Align::kLeft});
  sides.AddRow({"", "A", "B", "B - A", ""});
  const auto& a = report.a;
  const auto& b = report.b;
  sides.AddRow({"symbols (" + report.alphabet.ToString() + ")", std::to_string(a.symbols),
                std::to_string(b.symbols), SignedCount(a.symbols, b.symbols), "symbols"});
  sides.AddRow({"distinct", std::to_string(a.distinct), std::to_string(b.distinct),
                SignedCount(a.distinct, b.distinct), "symbols"});
  sides.AddRow({"entropy (plug-in)", FormatNumber(a.entropy_bits), FormatNumber(b.entropy_bits),
                FormatNumber(b.entropy_bits - a.entropy_bits), "bits/symbol"});
  sides.AddRow({"entropy (Miller-Madow)", FormatNumber(a.entropy_mm_bits),
                FormatNumber(b.entropy_mm_bits),
                FormatNumber(b.entropy_mm_bits - a.entropy_mm_bits), "bits/symbol"});
  sides.AddRow({"entropy standard error (i.i.d.)", FormatNumber(a.entropy_stderr_bits),
                FormatNumber(b.entropy_stderr_bits), "", "bits/symbol"});
  if (report.table) {
    sides.AddRow({"mean length under the table", NumberOrDash(a.deployed_mean_bits),
                  NumberOrDash(b.deployed_mean_bits),
                  Change(a.deployed_mean_bits, b.deployed_mean_bits), "bits/symbol"});
    sides.AddRow({"redundancy (mean length - entropy)", NumberOrDash(a.redundancy_bits),
                  NumberOrDash(b.redundancy_bits), Change(a.redundancy_bits, b.redundancy_bits),
                  "bits/symbol"});
    sides.AddRow({"symbols the table does not cover", std::to_string(a.unknown_symbols),
                  std::to_string(b.unknown_symbols), "", "occurrences"});
  }
  out += sides.Render();

  out += "\nbetween A and B:\n";
  TextTable between({Align::kLeft, Align::kRight, Align::kLeft});
  between.AddRow({"distinct symbols in both", std::to_string(report.shared_symbols), "symbols"});
  between.AddRow({"only in A", std::to_string(report.only_a_symbols), "symbols"});
  between.AddRow({"only in B", std::to_string(report.only_b_symbols), "symbols"});
  between.AddRow({"total variation distance", FormatNumber(report.total_variation), ""});
  between.AddRow({"Jensen-Shannon divergence", FormatNumber(report.js_divergence_bits), "bits"});
  const auto relative = [](const std::optional<double>& value) {
    return value ? FormatNumber(*value) : std::string("infinite");
  };
  between.AddRow(
      {"relative entropy D(A || B)", relative(report.relative_entropy_a_b_bits), "bits"});
  between.AddRow(
      {"relative entropy D(B || A)", relative(report.relative_entropy_b_a_bits), "bits"});
  out += between.Render();

  if (!report.top_moved.empty()) {
    out += "\nsymbols whose probability moved most:\n";
    TextTable moved({Align::kLeft, Align::kRight, Align::kRight, Align::kRight});
    moved.AddRow({"symbol", "A", "B", "B - A"});
    for (const MovedSymbol& symbol : report.top_moved) {
      moved.AddRow({symbol.display, FormatNumber(symbol.probability_a),
                    FormatNumber(symbol.probability_b),
                    FormatNumber(symbol.probability_b - symbol.probability_a)});
    }
    out += moved.Render();
  }
  return out;
}

}  // namespace codedrift::cli
