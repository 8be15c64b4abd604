#include "api_json.h"

#include <cmath>

namespace codedrift {
namespace {

nlohmann::json Optional(const std::optional<double>& value) {
  if (!value || !std::isfinite(*value)) return nullptr;
  return *value;
}

nlohmann::json Finite(double value) {
  if (!std::isfinite(value)) return nullptr;
  return value;
}

nlohmann::json HistoryJson(const std::vector<HistoryPoint>& points) {
  nlohmann::json out = nlohmann::json::array();
  for (const HistoryPoint& p : points) {
    out.push_back({{"time", p.unix_seconds},
                   {"entropy_bits", Finite(p.entropy_bits)},
                   {"deployed_mean_bits", Optional(p.deployed_mean_bits)},
                   {"retrained_mean_bits", Optional(p.retrained_mean_bits)},
                   {"saving_ratio", Optional(p.saving_ratio)},
                   {"saving_lower_ratio", Optional(p.saving_lower_ratio)},
                   {"state", CodeStateName(static_cast<CodeState>(p.state))}});
  }
  return out;
}

}  // namespace

nlohmann::json TopDriftJson(const Alphabet& alphabet, const std::vector<DriftEntry>& entries) {
  nlohmann::json out = nlohmann::json::array();
  for (const DriftEntry& entry : entries) {
    out.push_back({{"symbol", alphabet.FormatKey(entry.key)},
                   {"probability", entry.probability},
                   {"length", entry.cost_bits},
                   {"share_bits", entry.share_bits}});
  }
  return out;
}

nlohmann::json ModelJson(const ModelView& view, bool with_history) {
  nlohmann::json out = {{"stream", view.stream},
                        {"model", view.name},
                        {"alphabet", view.alphabet},
                        {"state", CodeStateName(view.state)},
                        {"state_since", view.state_since_unix},
                        {"reason", view.reason},
                        {"alerts_total", view.alerts_total},
                        {"table", view.table_path.empty() ? nlohmann::json(nullptr)
                                                          : nlohmann::json(view.table_path)},
                        {"table_problem", view.table_problem}};
  const auto alphabet = Alphabet::Parse(view.alphabet);
  if (view.evaluation) {
    const Evaluation& e = *view.evaluation;
    out["window_symbols"] = e.window_symbols;
    out["symbols_total"] = e.symbols_total;
    out["records_total"] = e.records_total;
    out["distinct"] = e.entropy.distinct;
    out["entropy_bits"] = Finite(e.entropy.plugin_bits);
    out["entropy_mm_bits"] = Finite(e.entropy.miller_madow_bits);
    out["entropy_stderr_bits"] = Finite(e.entropy.stderr_bits);
    out["deployed_mean_bits"] = Optional(e.deployed_mean_bits);
    out["redundancy_bits"] = Optional(e.redundancy_bits);
    out["retrained_mean_bits"] = Optional(e.retrained_mean_bits);
    out["saving_ratio"] = Optional(e.saving_ratio);
    out["saving_lower_ratio"] = Optional(e.saving_lower_ratio);
    out["ideal_saving_ratio"] = Optional(e.ideal_saving_ratio);
    out["payback_seconds"] = Optional(e.payback_seconds);
    out["kraft_sum"] = Finite(e.kraft_sum);
    out["unknown_symbols"] = e.unknown_in_window;
    out["unknown_symbols_total"] = e.unknown_symbols_total;
    out["unknown_symbols_per_second"] = e.unknown_per_second;
    out["symbols_per_second"] = e.symbols_per_second;
    out["records_per_second"] = e.records_per_second;
    out["top_drift"] =
        alphabet.ok() ? TopDriftJson(alphabet.value(), e.top_drift) : nlohmann::json::array();
    out["warnings"] = e.warnings;
  } else {
    out["window_symbols"] = 0;
    out["warnings"] = {"no evaluation yet"};
  }
  out["proposal"] =
      view.latest_proposal
          ? nlohmann::json("/api/v1/models/" + view.stream + "/" + view.name + "/proposal")
          : nlohmann::json(nullptr);
  out["alert"] = {
      {"saving_ratio", view.alert.saving},
      {"for_seconds", std::chrono::duration<double>(view.alert.for_duration).count()},
      {"min_symbols", view.alert.min_symbols},
      {"confidence", view.alert.confidence},
      {"cooldown_seconds", std::chrono::duration<double>(view.alert.cooldown).count()},
      {"max_payback_seconds", std::chrono::duration<double>(view.alert.max_payback).count()}};
  if (with_history) out["history"] = HistoryJson(view.history);
  return out;
}

}  // namespace codedrift
