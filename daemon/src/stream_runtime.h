// StreamRuntime: one configured stream — its counters, its listener and the models its records
// feed. The record handler runs on socket threads; the model list is swapped on reload.
#pragma once

#include <atomic>
#include <memory>
#include <string_view>
#include <vector>

#include "codedrift/daemon_config.h"

#include "model_runtime.h"
#include "stream_counters.h"

namespace codedrift {

using ModelList = std::vector<std::shared_ptr<ModelRuntime>>;

// Thread-safe: Deliver from any thread; SetModels from the control thread. A handler holds the
// list it delivers to for the length of one call, so a list retired by a reload is freed as
// soon as the last delivery into it returns (a reload never grows memory).
class StreamRuntime {
 public:
  explicit StreamRuntime(StreamConfig config, std::shared_ptr<StreamCounters> counters =
                                                  std::make_shared<StreamCounters>())
      : config_(std::move(config)), counters_(std::move(counters)) {}

  // Hot path: every record goes to each model of the stream.
  void Deliver(std::string_view record) const {
    const std::shared_ptr<const ModelList> models = models_.load(std::memory_order_acquire);
    for (const auto& model : *models) model->Ingest(record);
  }
  // Hot path for `lines` framing: whole records back to back (see Model::IngestRun).
  void DeliverRun(std::string_view run, uint64_t records) const {
    const std::shared_ptr<const ModelList> models = models_.load(std::memory_order_acquire);
    for (const auto& model : *models) model->IngestRun(run, records);
  }

  void SetModels(ModelList models) {
    models_.store(std::make_shared<const ModelList>(std::move(models)), std::memory_order_release);
  }
  // The current list; hold the pointer while iterating (a reload may retire it meanwhile).
  std::shared_ptr<const ModelList> models() const {
    return models_.load(std::memory_order_acquire);
  }

  const StreamConfig& config() const { return config_; }
  void set_config(StreamConfig config) { config_ = std::move(config); }
  const std::shared_ptr<StreamCounters>& counters() const { return counters_; }

 private:
  StreamConfig config_;
  std::shared_ptr<StreamCounters> counters_;
  std::atomic<std::shared_ptr<const ModelList>> models_{std::make_shared<const ModelList>()};
};

// True when two stream configs can share one listener (everything but the models equal).
bool SameListener(const StreamConfig& a, const StreamConfig& b);

}  // namespace codedrift
