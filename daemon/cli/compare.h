// `codedrift compare A B`: two symbol distributions side by side — two captures, or a capture
// and a code table's training counts.
#pragma once

#include <CLI/CLI.hpp>

namespace codedrift::cli {

// Adds the `compare` subcommand to `app`; it stores its exit code in `exit_code` when it runs.
void AddCompareCommand(CLI::App& app, int& exit_code);

}  // namespace codedrift::cli
