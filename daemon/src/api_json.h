// JSON documents of the HTTP API (DESIGN.md section 5): keys as in the CLI where the figure is
// the same. Pure functions of a ModelView.
#pragma once

#include <nlohmann/json.hpp>

#include "model_runtime.h"

namespace codedrift {

// One model. `with_history` adds the `history` array (the single-model endpoint).
nlohmann::json ModelJson(const ModelView& view, bool with_history);

// Top drift entries as the CLI prints them: [{symbol, probability, length, share_bits}].
nlohmann::json TopDriftJson(const Alphabet& alphabet, const std::vector<DriftEntry>& entries);

}  // namespace codedrift
