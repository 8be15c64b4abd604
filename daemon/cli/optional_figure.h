// How a figure that may be undefined (a mean length under a table that cannot code every
// symbol, an estimate with too few symbols) is written by the report commands: null in JSON,
// "-" in text. Shared by inspect and compare so both write a missing figure the same way.
#pragma once

#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "text_table.h"

namespace codedrift::cli {

inline nlohmann::ordered_json NumberOrNull(const std::optional<double>& value) {
  return value ? nlohmann::ordered_json(*value) : nlohmann::ordered_json(nullptr);
}

// FormatNumber(*value) (six decimals), or "-".
inline std::string NumberOrDash(const std::optional<double>& value) {
  return value ? FormatNumber(*value) : "-";
}

}  // namespace codedrift::cli
