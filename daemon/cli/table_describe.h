// Words for a loaded code table, shared by `check` and `codes`.
#pragma once

#include <string>

#include "codedrift/code_table.h"

namespace codedrift::cli {

// Why a table is not deployable as it stands, or empty when it is: it must code every symbol
// its alphabet can produce (an escape, or full coverage of a bounded alphabet).
std::string CoverageProblem(const CodeTable& table);

}  // namespace codedrift::cli
