// Daemon: codedriftd's lifecycle — builds streams and models from a config, runs its ingest
// threads, one control thread (HTTP, signals, webhook) and one evaluation thread, reloads on
// SIGHUP or POST /api/v1/reload, and stops in order on SIGTERM/SIGINT (stop accepting, drain,
// final evaluation, exit 0).
#pragma once

#include <condition_variable>
#include <functional>
#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <thread>
#include <vector>

#include "codedrift/clock.h"
#include "codedrift/daemon_config.h"
#include "codedrift/result.h"

#include "model_runtime.h"

namespace codedrift {

struct HttpRequest;

struct DaemonOptions {
  std::string config_path;  // empty: the embedded default config
  std::string ready_file;   // written once every socket is bound: ports as JSON
  int io_threads = 2;       // ingest threads; the control and evaluation threads come on top
};

// Not copyable. Run() blocks until a stop signal; all other public methods are thread-safe.
class Daemon {
 public:
  Daemon(DaemonConfig config, DaemonOptions options);
  ~Daemon();
  Daemon(const Daemon&) = delete;
  Daemon& operator=(const Daemon&) = delete;

  // Binds everything and serves until SIGTERM/SIGINT. Returns the process exit code.
  int Run();

  // Re-reads the config file and tables; on any error keeps the running config.
  Status Reload();
  std::vector<ModelView> Views() const;
  std::optional<ModelView> View(const std::string& stream, const std::string& model) const;
  // Trains and writes a proposal now (on the evaluation thread); returns its path.
  Result<std::string> WriteProposalNow(const std::string& stream, const std::string& model);
  std::string RenderMetrics() const;
  // True when the request carries the admin token (never when no token file is configured).
  bool Authorized(const HttpRequest& request) const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace codedrift
