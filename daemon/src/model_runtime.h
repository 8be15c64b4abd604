// ModelRuntime: one configured model inside the daemon — its Model (fed by socket threads),
// evaluator, code state, deployed table and history. Evaluate() runs on the evaluation thread;
// View() may be called from any thread (HTTP handlers).
#pragma once

#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <vector>

#include "codedrift/checkpoint.h"
#include "codedrift/code_state.h"
#include "codedrift/code_table.h"
#include "codedrift/daemon_config.h"
#include "codedrift/evaluator.h"
#include "codedrift/history.h"
#include "codedrift/model.h"

namespace codedrift {

// A copy of a model's latest figures, safe to read without locks.
struct ModelView {
  std::string stream;
  std::string name;
  std::string alphabet;
  std::optional<Evaluation> evaluation;
  CodeState state = CodeState::kFit;
  double state_since_unix = 0;
  std::string reason;
  uint64_t alerts_total = 0;
  std::string table_path;
  std::string table_problem;  // why no table is deployed (empty when one is)
  std::vector<HistoryPoint> history;
  bool export_counts = false;
  AlertRule alert;  // the configured rule (thresholds for charts)
  std::vector<std::pair<std::string, uint64_t>> window_counts;  // only with export_counts
  std::optional<std::string> latest_proposal;  // path of the newest proposal written
};

SymbolizerSpec ToSymbolizerSpec(const SymbolsConfig& symbols);
WindowSpec ToWindowSpec(const WindowConfig& window);
CodeStateRule ToStateRule(const AlertRule& alert);

// export_counts exports one series per symbol; beyond this many distinct symbols it exports
// none (bounded label cardinality) and says so in the model's warnings.
inline constexpr size_t kMaxExportedSymbols = 4096;

class ModelRuntime {
 public:
  // `evaluate_every` sizes the history (a day of evaluations, then one point a minute).
  ModelRuntime(std::string stream, ModelConfig config, const Clock& clock,
               std::chrono::milliseconds evaluate_every);

  // Hot path, any thread.
  void Ingest(std::string_view record) { model_->Ingest(record); }
  void IngestRun(std::string_view run, uint64_t records) { model_->IngestRun(run, records); }

  // Loads the configured table (if any). On error the previous table stays and the error is
  // returned; a table the daemon cannot deploy (uncovered symbols, no escape) is refused.
  Status LoadTable();
  // Takes over another runtime's window and state when the symbolizer and window are the same
  // (reload); returns whether it did.
  bool AdoptCountsFrom(ModelRuntime& previous);

  // Evaluation thread only.
  std::optional<StateChange> Evaluate();
  // The retrained table on the current window (proposal), with metadata. Evaluation thread.
  Result<CodeTable> Retrain() const;

  ModelView View() const;
  void SetLatestProposal(const std::string& path);

  // Checkpoints (evaluation thread). Export copies the state (identity and time are the
  // caller's to fill in); Import takes a checkpoint over before the first evaluation, its
  // steady times already moved to this process's clock.
  ModelCheckpoint ExportCheckpoint() const;
  Status ImportCheckpoint(const ModelCheckpoint& checkpoint);

  const std::string& stream() const { return stream_; }
  const std::string& name() const { return config_.name; }
  const ModelConfig& config() const { return config_; }

 private:
  // Single-byte models: the model keeps lifetime counts only of the bytes the deployed table
  // has no code for (all the unknown-symbol figures read), so with a table that codes the
  // traffic, or none, ingest does no per-byte counting.
  void CountOnlyUncoveredBytes();

  const std::string stream_;
  const ModelConfig config_;
  const Clock& clock_;
  std::shared_ptr<Model> model_;
  ModelEvaluator evaluator_;        // evaluation thread
  CodeStateMachine state_machine_;  // evaluation thread

  mutable std::mutex mutex_;  // guards everything below
  std::shared_ptr<const CodeTable> table_;
  std::string table_problem_;
  std::optional<Evaluation> latest_;
  History history_;
  CodeState state_ = CodeState::kFit;
  double state_since_unix_ = 0;
  std::string reason_ = "no evaluation yet";
  uint64_t alerts_total_ = 0;
  std::optional<std::string> latest_proposal_;
  std::vector<std::pair<std::string, uint64_t>> window_counts_;  // export_counts only
};

}  // namespace codedrift
