// Reading the shipped dashboard JSON the way its front end would: every panel query and every
// template variable query, with the variables replaced by concrete values, so a test can run
// them against a real Prometheus. Header-only (the integration build compiles only *_test.cc
// and the harness). Pure functions.
#pragma once

#include <cctype>
#include <map>
#include <regex>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

namespace codedrift::testing {

struct PanelQuery {
  std::string panel;  // the panel's title
  std::string expr;   // PromQL, variables replaced
};

// Replaces $name and ${name} for every entry of `values`; anything else starting with '$' is
// left alone, so a caller can assert that nothing unreplaced remains.
inline std::string ReplaceVariables(std::string text,
                                    const std::map<std::string, std::string>& values) {
  for (const auto& [name, value] : values) {
    for (const std::string& pattern : {"${" + name + "}", "$" + name}) {
      size_t at = text.find(pattern);
      while (at != std::string::npos) {
        // "$model" must not match the start of "$models".
        const size_t end = at + pattern.size();
        if (pattern[1] != '{' && end < text.size() &&
            (std::isalnum(static_cast<unsigned char>(text[end])) || text[end] == '_')) {
          at = text.find(pattern, end);
          continue;
        }
        text.replace(at, pattern.size(), value);
        at = text.find(pattern, at + value.size());
      }
    }
  }
  return text;
}

// Every target's `expr` of every panel, rows' nested panels included.
inline void CollectPanelQueries(const nlohmann::json& panels,
                                const std::map<std::string, std::string>& values,
                                std::vector<PanelQuery>& out) {
  if (!panels.is_array()) return;
  for (const nlohmann::json& panel : panels) {
    if (panel.contains("panels")) CollectPanelQueries(panel["panels"], values, out);
    if (!panel.contains("targets")) continue;
    for (const nlohmann::json& target : panel["targets"]) {
      if (!target.contains("expr")) continue;
      out.push_back({panel.value("title", "(untitled)"),
                     ReplaceVariables(target["expr"].get<std::string>(), values)});
    }
  }
}

inline std::vector<PanelQuery> PanelQueries(const nlohmann::json& dashboard,
                                            const std::map<std::string, std::string>& values) {
  std::vector<PanelQuery> out;
  CollectPanelQueries(dashboard.value("panels", nlohmann::json::array()), values, out);
  return out;
}

// A query variable's label_values(SELECTOR, LABEL), as the front end's Prometheus source
// answers it through GET /api/v1/label/LABEL/values?match[]=SELECTOR.
struct LabelValuesQuery {
  std::string variable;
  std::string selector;  // variables replaced
  std::string label;
};

inline std::vector<LabelValuesQuery> VariableQueries(
    const nlohmann::json& dashboard, const std::map<std::string, std::string>& values) {
  std::vector<LabelValuesQuery> out;
  static const std::regex kLabelValues(R"(^\s*label_values\((.*),\s*([A-Za-z_]\w*)\s*\)\s*$)");
  for (const nlohmann::json& variable : dashboard["templating"]["list"]) {
    if (variable.value("type", "") != "query") continue;
    const nlohmann::json& query = variable["query"];
    const std::string text =
        query.is_object() ? query.value("query", "") : query.get<std::string>();
    std::smatch match;
    if (!std::regex_match(text, match, kLabelValues)) {
      out.push_back({variable.value("name", ""), "", ""});  // the caller reports it
      continue;
    }
    out.push_back(
        {variable.value("name", ""), ReplaceVariables(match[1].str(), values), match[2].str()});
  }
  return out;
}

}  // namespace codedrift::testing
