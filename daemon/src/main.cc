// codedriftd: watches telemetry streams for drift away from their deployed static code.
#include <cstdio>
#include <iostream>

#include <CLI/CLI.hpp>

#include "codedrift/daemon_config.h"

#include "daemon.h"
#include <malloc.h>
#include <spdlog/sinks/stdout_sinks.h>
#include <spdlog/spdlog.h>

int main(int argc, char** argv) {
#ifdef __GLIBC__
  // Windows and their per-evaluation copies are megabytes each. A fixed mmap threshold keeps
  // glibc from raising it after the first such free (its default), so these blocks always go
  // back to the system when freed and resident memory follows what the models hold, across
  // evaluations and reloads, instead of stepping up with heap fragmentation.
  mallopt(M_MMAP_THRESHOLD, 256 * 1024);
#endif
  CLI::App app{
      "codedriftd: measures how far a deployed static code sits above the entropy of "
      "current traffic, and proposes a retrained table"};
  codedrift::DaemonOptions options;
  bool check_only = false;
  bool verbose = false;
  app.add_option("-c,--config", options.config_path,
                 "YAML config file (default: the embedded default config)");
  app.add_flag("--check-config", check_only, "validate the config and its tables, then exit");
  app.add_option("--ready-file", options.ready_file,
                 "write the bound ports as JSON to this file once serving");
  app.add_option("--io-threads", options.io_threads,
                 "ingest threads (HTTP and evaluation have their own)")
      ->check(CLI::Range(1, 64));
  app.add_flag("-v,--verbose", verbose, "log debug events too");
  app.set_version_flag("--version", std::string("codedriftd ") + CODEDRIFT_VERSION);
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? 0 : 2;
  }

  auto logger = spdlog::stderr_logger_mt("codedriftd");
  logger->set_pattern("%Y-%m-%dT%H:%M:%S.%eZ %l %v", spdlog::pattern_time_type::utc);
  logger->set_level(verbose ? spdlog::level::debug : spdlog::level::info);
  spdlog::set_default_logger(logger);

  auto config = options.config_path.empty()
                    ? codedrift::ParseDaemonConfig(codedrift::EmbeddedDefaultConfig(),
                                                   "<embedded default config>")
                    : codedrift::LoadDaemonConfig(options.config_path);
  if (!config.ok()) {
    std::fprintf(stderr, "%s\n", config.error().message.c_str());
    return 2;
  }
  if (check_only) {
    for (const auto& stream : config.value().streams) {
      for (const auto& model : stream.models) {
        if (model.table.empty()) continue;
        auto table = codedrift::LoadCodeTable(model.table);
        if (!table.ok()) {
          std::fprintf(stderr, "%s\n", table.error().message.c_str());
          return 2;
        }
      }
    }
    std::printf("config ok\n");
    return 0;
  }
  codedrift::Daemon daemon(std::move(config).value(), options);
  return daemon.Run();
}
