// codedrift_soak: the soak benchmark of `make soak` (tests/soak/run_soak.sh prepares its
// capture and tables).
//
//   codedrift_soak CAPTURE TABLES_DIR [--seconds S] [--sample-every S] [--reload-every S]
//                  [--first-reload S] [--udp-rate R] [--warmup S] [--rss-bound F]
//                  [--evaluate-every D]
//
// Exit codes: 0 every check passed, 1 a check failed, 2 usage or setup error, 130 interrupted.
#include <cstdio>
#include <cstdlib>
#include <map>
#include <string>

#include "soak_run.h"

namespace {

int Usage() {
  std::fprintf(stderr,
               "usage: codedrift_soak CAPTURE TABLES_DIR [--seconds S] [--sample-every S] "
               "[--reload-every S]\n"
               "                      [--first-reload S] [--udp-rate R] [--warmup S] "
               "[--rss-bound F] [--evaluate-every D]\n");
  return 2;
}

}  // namespace

int main(int argc, char** argv) {
  using codedrift::soak::SoakOptions;
  std::map<std::string, std::string> flags;
  std::vector<std::string> positional;
  for (int i = 1; i < argc; ++i) {
    const std::string arg = argv[i];
    if (arg.rfind("--", 0) != 0) {
      positional.push_back(arg);
    } else if (i + 1 < argc) {
      flags[arg.substr(2)] = argv[++i];
    } else {
      return Usage();
    }
  }
  if (positional.size() != 2) return Usage();
  SoakOptions options;
  options.capture = positional[0];
  options.tables_dir = positional[1];
  const std::map<std::string, double*> numbers = {
      {"seconds", &options.seconds},           {"sample-every", &options.sample_every},
      {"reload-every", &options.reload_every}, {"first-reload", &options.first_reload},
      {"udp-rate", &options.udp_rate},         {"warmup", &options.warmup},
      {"rss-bound", &options.rss_bound}};
  bool first_reload_given = false;
  for (const auto& [name, value] : flags) {
    if (name == "evaluate-every") {
      options.evaluate_every = value;
      continue;
    }
    const auto it = numbers.find(name);
    char* end = nullptr;
    const double number = std::strtod(value.c_str(), &end);
    if (it == numbers.end() || end == value.c_str() || *end != '\0' || number < 0) {
      std::fprintf(stderr, "codedrift_soak: bad option --%s %s\n", name.c_str(), value.c_str());
      return Usage();
    }
    *it->second = number;
    first_reload_given = first_reload_given || name == "first-reload";
  }
  if (!first_reload_given) options.first_reload = options.reload_every;
  if (options.sample_every <= 0 || options.reload_every <= 0 || options.udp_rate <= 0) {
    return Usage();
  }
  codedrift::soak::InstallInterruptHandlers();
  codedrift::soak::SoakRun run(options);
  return run.Run();
}
