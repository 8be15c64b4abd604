// `codedrift synth`: plays a traffic scenario (lib scenario.h) to stdout, a file or a socket.
#pragma once

#include <CLI/CLI.hpp>

namespace codedrift::cli {

// Adds the `synth` subcommand to `app`; it stores its exit code in `exit_code` when it runs.
void AddSynthCommand(CLI::App& app, int& exit_code);

}  // namespace codedrift::cli
