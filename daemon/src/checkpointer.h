// Checkpointer: saves every model's state to state_dir/checkpoints/<stream>/<model>.ckpt every
// checkpoint interval and at shutdown, and restores it at start. A checkpoint that is damaged,
// from a newer format or for a changed model definition is renamed aside
// (<model>.ckpt.bad-<reason>-<UTC time>) with a warning, never trusted and never fatal; a write
// that fails (full disk, unwritable state_dir) is logged at most once a minute, counted, and
// retried at the next interval.
//
// Restore and Write run on the evaluation thread (Restore before it starts), because a model's
// evaluator and code state belong to that thread. failures() may be read from any thread.
#pragma once

#include <atomic>
#include <chrono>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "codedrift/checkpoint.h"
#include "codedrift/clock.h"

#include "model_runtime.h"

namespace codedrift {

class Checkpointer {
 public:
  Checkpointer(std::string state_dir, const Clock& clock);

  std::string PathOf(const std::string& stream, const std::string& model) const;

  // Restores each model from its checkpoint if there is one that matches; sets the others
  // aside. Returns how many models were restored.
  size_t Restore(const std::vector<std::shared_ptr<ModelRuntime>>& models);

  // Writes every model once `interval` has passed since the last round (or since start).
  void WriteIfDue(const std::vector<std::shared_ptr<ModelRuntime>>& models,
                  std::chrono::nanoseconds interval);
  // Writes every model now (shutdown). Returns whether every write succeeded.
  bool WriteAll(const std::vector<std::shared_ptr<ModelRuntime>>& models);

  // Checkpoint writes that failed since start (codedrift_checkpoint_failures_total).
  uint64_t failures() const { return failures_.load(); }

 private:
  Status WriteOne(ModelRuntime& model);
  void ReportFailure(const std::string& message);
  void SetAside(const std::string& path, const std::string& label, const CheckpointError& error);

  const std::string state_dir_;
  const Clock& clock_;
  std::atomic<uint64_t> failures_{0};

  // Evaluation thread only.
  std::chrono::nanoseconds last_round_;
  std::optional<std::chrono::nanoseconds> last_failure_log_;
  uint64_t failures_unlogged_ = 0;
  bool failing_ = false;    // the last round had a failure (log the recovery)
  bool announced_ = false;  // the first successful round was logged
};

}  // namespace codedrift
