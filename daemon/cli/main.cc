// `codedrift`: the companion CLI of the daemon. Trains code tables from captures, validates
// them, prints their codewords, analyses captures offline and replays them to a listener.
#include <csignal>
#include <iostream>

#include "cli_common.h"
#include "compare.h"
#include "synth.h"

int main(int argc, char** argv) {
  using namespace codedrift::cli;
  // A peer that closes a replay connection must give an error, not kill the process.
  std::signal(SIGPIPE, SIG_IGN);

  CLI::App app(
      "codedrift: measure how far a static entropy code has drifted from the traffic it "
      "codes.",
      "codedrift");
  app.set_version_flag("--version", std::string("codedrift ") + CODEDRIFT_VERSION);
  app.require_subcommand(1);
  app.footer(
      "Exit codes: 0 ok, 1 invalid input (table, capture), 2 usage error. "
      "Run `codedrift COMMAND --help` for a command's details.");
  int exit_code = kExitOk;
  AddTrainCommand(app, exit_code);
  AddCheckCommand(app, exit_code);
  AddCodesCommand(app, exit_code);
  AddInspectCommand(app, exit_code);
  AddCompareCommand(app, exit_code);
  AddReplayCommand(app, exit_code);
  AddSynthCommand(app, exit_code);
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);  // prints help, the version, or the error
    return code == 0 ? kExitOk : kExitUsage;
  }
  return exit_code;
}
