#include "model_runtime.h"

#include <bitset>
#include <chrono>
#include <cstdio>

namespace codedrift {
namespace {

// History keeps every evaluation of the last day, then one point a minute for six more days.
constexpr auto kHistoryFineSpan = std::chrono::hours(24);
constexpr auto kHistoryCoarseStep = std::chrono::minutes(1);
constexpr size_t kHistoryCoarse = 6 * 24 * 60;
constexpr size_t kHistoryMaxFine = 1'000'000;  // bounds memory at very short intervals

History MakeHistory(std::chrono::milliseconds evaluate_every) {
  const int64_t interval_ms = std::max<int64_t>(evaluate_every.count(), 1);
  const auto fine = static_cast<size_t>(
      std::chrono::duration_cast<std::chrono::milliseconds>(kHistoryFineSpan).count() /
      interval_ms);
  const auto coarse_every = static_cast<size_t>(std::max<int64_t>(
      std::chrono::duration_cast<std::chrono::milliseconds>(kHistoryCoarseStep).count() /
          interval_ms,
      1));
  return History(std::min(fine, kHistoryMaxFine), coarse_every, kHistoryCoarse);
}

double UnixNow() {
  return std::chrono::duration<double>(std::chrono::system_clock::now().time_since_epoch()).count();
}

std::string Figure(double value) {
  char text[32];
  std::snprintf(text, sizeof text, "%.6f", value);
  return text;
}

}  // namespace

SymbolizerSpec ToSymbolizerSpec(const SymbolsConfig& symbols) {
  SymbolizerSpec spec;
  spec.kind = symbols.kind;
  spec.block = symbols.block;
  spec.tokens = symbols.tokens;
  spec.field = symbols.field;
  spec.bytes = symbols.bytes;
  return spec;
}

WindowSpec ToWindowSpec(const WindowConfig& window) {
  if (window.kind == WindowKind::kSpan) {
    return WindowSpec{.span = window.span, .buckets = static_cast<int>(window.buckets)};
  }
  return WindowSpec{.symbols = window.symbols};
}

CodeStateRule ToStateRule(const AlertRule& alert) {
  CodeStateRule rule;
  rule.saving = alert.saving;
  rule.hold = alert.for_duration;
  rule.min_symbols = alert.min_symbols;
  rule.confidence = alert.confidence;
  rule.cooldown = alert.cooldown;
  rule.max_payback = alert.max_payback;
  return rule;
}

namespace {

EvaluationOptions OptionsFor(const ModelConfig& config) {
  EvaluationOptions options;
  options.confidence = config.alert.confidence;
  // Count windows are cut into 16 batches; time windows into their buckets (at most 64).
  if (config.window.kind == WindowKind::kSpan) {
    options.batches = static_cast<int>(std::min<uint32_t>(config.window.buckets, 64));
  }
  return options;
}

}  // namespace

ModelRuntime::ModelRuntime(std::string stream, ModelConfig config, const Clock& clock,
                           std::chrono::milliseconds evaluate_every)
    : stream_(std::move(stream)),
      config_(std::move(config)),
      clock_(clock),
      model_(std::make_shared<Model>(ToSymbolizerSpec(config_.symbols),
                                     ToWindowSpec(config_.window), clock)),
      evaluator_(OptionsFor(config_)),
      state_machine_(ToStateRule(config_.alert)),
      history_(MakeHistory(evaluate_every)) {}

Status ModelRuntime::LoadTable() {
  if (config_.table.empty()) {
    {
      std::lock_guard lock(mutex_);
      table_problem_ = "no table configured: entropy only";
    }
    CountOnlyUncoveredBytes();
    return Ok{};
  }
  auto table = LoadCodeTable(config_.table);
  if (!table.ok()) return table.error();
  if (table.value().alphabet != config_.symbols.alphabet()) {
    return Error{config_.table + ": table alphabet " + table.value().alphabet.ToString() +
                 " does not match the model's symbols " + config_.symbols.alphabet().ToString()};
  }
  if (!table.value().CoversWholeAlphabet()) {
    return Error{config_.table +
                 ": table covers only part of its alphabet and has no escape, so symbols it "
                 "does not cover could not be sent; add an escape entry to deploy it"};
  }
  {
    std::lock_guard lock(mutex_);
    table_ = std::make_shared<const CodeTable>(std::move(table).value());
    table_problem_.clear();
  }
  CountOnlyUncoveredBytes();
  return Ok{};
}

void ModelRuntime::CountOnlyUncoveredBytes() {
  if (config_.symbols.kind != AlphabetKind::kBytes || config_.symbols.block != 1) return;
  std::shared_ptr<const CodeTable> table;
  {
    std::lock_guard lock(mutex_);
    table = table_;
  }
  std::bitset<256> uncovered;
  if (table) {
    const TableCosts costs(*table);
    for (unsigned byte = 0; byte < 256; ++byte) {
      if (!costs.Covers(SymbolKey(1, static_cast<char>(byte)))) uncovered.set(byte);
    }
  }
  model_->CountOnlyBytes(ByteSelection(uncovered));
}

bool ModelRuntime::AdoptCountsFrom(ModelRuntime& previous) {
  if (!(previous.config_.symbols.alphabet() == config_.symbols.alphabet()) ||
      !(ToSymbolizerSpec(previous.config_.symbols) == ToSymbolizerSpec(config_.symbols)) ||
      previous.config_.window.kind != config_.window.kind ||
      previous.config_.window.symbols != config_.window.symbols ||
      previous.config_.window.span != config_.window.span ||
      previous.config_.window.buckets != config_.window.buckets) {
    return false;
  }
  model_ = previous.model_;
  CountOnlyUncoveredBytes();  // this runtime's table, which may differ from the previous one
  evaluator_ = previous.evaluator_;
  state_machine_ = previous.state_machine_;
  state_machine_.set_rule(ToStateRule(config_.alert));
  std::scoped_lock lock(mutex_, previous.mutex_);
  latest_ = previous.latest_;
  history_ = previous.history_;
  state_ = previous.state_;
  state_since_unix_ = previous.state_since_unix_;
  reason_ = previous.reason_;
  alerts_total_ = previous.alerts_total_;
  latest_proposal_ = previous.latest_proposal_;
  return true;
}

std::optional<StateChange> ModelRuntime::Evaluate() {
  std::shared_ptr<const CodeTable> table;
  {
    std::lock_guard lock(mutex_);
    table = table_;
  }
  Evaluation evaluation = evaluator_.Evaluate(model_->Sample(), table.get());
  const auto now = clock_.Now();
  std::optional<StateChange> change;
  if (table) change = state_machine_.Update(evaluation, now);

  HistoryPoint point{.unix_seconds = UnixNow(),
                     .entropy_bits = evaluation.entropy.plugin_bits,
                     .deployed_mean_bits = evaluation.deployed_mean_bits,
                     .retrained_mean_bits = evaluation.retrained_mean_bits,
                     .saving_ratio = evaluation.saving_ratio,
                     .saving_lower_ratio = evaluation.saving_lower_ratio,
                     .state = static_cast<int>(state_machine_.state())};
  std::vector<std::pair<std::string, uint64_t>> exported;
  if (config_.export_counts && evaluator_.last_window_counts()) {
    const auto& counts = *evaluator_.last_window_counts();
    if (counts.distinct() <= kMaxExportedSymbols) {
      for (const auto& [key, n] : counts.Sorted()) {
        exported.emplace_back(counts.alphabet().FormatKey(key), n);
      }
    }
  }
  std::lock_guard lock(mutex_);
  window_counts_ = std::move(exported);
  if (change) state_since_unix_ = point.unix_seconds;
  state_ = state_machine_.state();
  reason_ = table ? state_machine_.reason() : table_problem_;
  alerts_total_ = state_machine_.alerts();
  history_.Add(point);
  latest_ = std::move(evaluation);
  return change;
}

Result<CodeTable> ModelRuntime::Retrain() const {
  const auto& counts = evaluator_.last_window_counts();
  if (!counts || counts->total() == 0) return Error{"the window is empty: nothing to train on"};
  std::shared_ptr<const CodeTable> deployed;
  std::optional<Evaluation> latest;
  {
    std::lock_guard lock(mutex_);
    deployed = table_;
    latest = latest_;
  }
  const int literal_bits = deployed && deployed->escape ? deployed->escape->literal_bits
                                                        : DefaultLiteralBits(counts->alphabet());
  const int max_length =
      deployed && deployed->kind == CodeKind::kPrefix ? deployed->max_length : 15;
  auto table = TrainPrefixTable(*counts, max_length, literal_bits);
  if (!table.ok()) return table;
  CodeTable& proposal = table.value();
  proposal.metadata["stream"] = stream_;
  proposal.metadata["model"] = config_.name;
  proposal.metadata["symbols"] = std::to_string(counts->total());
  proposal.metadata["kraft_sum"] = Figure(proposal.KraftSumValue());
  if (latest && latest->saving_ratio) {
    proposal.metadata["saving_ratio"] = Figure(*latest->saving_ratio);
  }
  if (latest && latest->saving_lower_ratio) {
    proposal.metadata["saving_lower_ratio"] = Figure(*latest->saving_lower_ratio);
  }
  return table;
}

ModelView ModelRuntime::View() const {
  ModelView view;
  view.stream = stream_;
  view.name = config_.name;
  view.alphabet = config_.symbols.alphabet().ToString();
  view.table_path = config_.table;
  view.export_counts = config_.export_counts;
  view.alert = config_.alert;
  std::lock_guard lock(mutex_);
  view.evaluation = latest_;
  view.state = state_;
  view.state_since_unix = state_since_unix_;
  view.reason = reason_;
  view.alerts_total = alerts_total_;
  view.table_problem = table_problem_;
  view.history = history_.Points();
  view.latest_proposal = latest_proposal_;
  view.window_counts = window_counts_;
  return view;
}

void ModelRuntime::SetLatestProposal(const std::string& path) {
  std::lock_guard lock(mutex_);
  latest_proposal_ = path;
}

ModelCheckpoint ModelRuntime::ExportCheckpoint() const {
  ModelCheckpoint checkpoint;
  checkpoint.model = model_->ExportState();
  checkpoint.evaluator = evaluator_.ExportState();
  checkpoint.code_state = SnapshotOf(state_machine_);
  std::lock_guard lock(mutex_);
  checkpoint.state_since_unix = state_since_unix_;
  checkpoint.latest_proposal = latest_proposal_.value_or("");
  checkpoint.history = history_.ExportState();
  return checkpoint;
}

Status ModelRuntime::ImportCheckpoint(const ModelCheckpoint& checkpoint) {
  if (auto imported = model_->ImportState(checkpoint.model); !imported.ok()) return imported;
  evaluator_.ImportState(checkpoint.evaluator);
  RestoreFrom(checkpoint.code_state, state_machine_);
  std::lock_guard lock(mutex_);
  history_.ImportState(checkpoint.history);
  state_ = state_machine_.state();
  state_since_unix_ = checkpoint.state_since_unix;
  alerts_total_ = state_machine_.alerts();
  if (!checkpoint.latest_proposal.empty()) latest_proposal_ = checkpoint.latest_proposal;
  return Ok{};
}

}  // namespace codedrift
