// StreamRuntime: one configured stream — its counters, its listener and the models its records
// feed. The record handler runs on socket threads; the model list is swapped on reload.
#pragma once

#include <atomic>
#include <memory>
#include <mutex>
#include <string_view>
#include <vector>

#include "codedrift/daemon_config.h"
#include "model_runtime.h"
#include "stream_counters.h"

namespace codedrift {

using ModelList = std::vector<std::shared_ptr<ModelRuntime>>;

// Thread-safe: Deliver from any thread; SetModels from the control thread. Retired model lists
// are kept until the stream is destroyed, so a handler never reads a freed list (reloads are
// rare and lists are small).
class StreamRuntime {
 public:
  explicit StreamRuntime(StreamConfig config,
                         std::shared_ptr<StreamCounters> counters = std::make_shared<StreamCounters>())
      : config_(std::move(config)), counters_(std::move(counters)) {}

  // Hot path: every record goes to each model of the stream.
  void Deliver(std::string_view record) const {
    const ModelList* models = models_.load(std::memory_order_acquire);
    for (const auto& model : *models) model->Ingest(record);
  }
  // Hot path for `lines` framing: whole records back to back (see Model::IngestRun).
  void DeliverRun(std::string_view run, uint64_t records) const {
    const ModelList* models = models_.load(std::memory_order_acquire);
    for (const auto& model : *models) model->IngestRun(run, records);
  }

  void SetModels(ModelList models) {
    std::lock_guard lock(mutex_);
    lists_.push_back(std::make_unique<ModelList>(std::move(models)));
    models_.store(lists_.back().get(), std::memory_order_release);
  }
  const ModelList& models() const { return *models_.load(std::memory_order_acquire); }

  const StreamConfig& config() const { return config_; }
  void set_config(StreamConfig config) { config_ = std::move(config); }
  const std::shared_ptr<StreamCounters>& counters() const { return counters_; }

 private:
  StreamConfig config_;
  std::shared_ptr<StreamCounters> counters_;
  std::mutex mutex_;  // guards lists_
  std::vector<std::unique_ptr<ModelList>> lists_;
  std::atomic<const ModelList*> models_{&kEmpty};
  static inline const ModelList kEmpty;
};

// True when two stream configs can share one listener (everything but the models equal).
bool SameListener(const StreamConfig& a, const StreamConfig& b);

}  // namespace codedrift
