#include "daemon.h"

#include <atomic>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <future>
#include <map>
#include <set>

#include <boost/asio/io_context.hpp>
#include <boost/asio/signal_set.hpp>
#include <nlohmann/json.hpp>

#include "api_json.h"
#include "checkpointer.h"
#include "evaluation_loop.h"
#include "http_server.h"
#include "io_pool.h"
#include "metrics.h"
#include "proposal_writer.h"
#include "routes.h"
#include "stream_listener.h"
#include "stream_runtime.h"
#include "webhook_sink.h"
#include <spdlog/spdlog.h>
#include <unistd.h>

namespace codedrift {
namespace asio = boost::asio;

namespace {

constexpr auto kDrainDeadline = std::chrono::seconds(5);

Result<std::string> ReadToken(const std::string& path) {
  if (path.empty()) return std::string();
  std::ifstream in(path);
  if (!in) return Error{path + ": cannot read the admin token file"};
  std::string token;
  std::getline(in, token);
  while (!token.empty() && (token.back() == '\r' || token.back() == ' ')) token.pop_back();
  if (token.size() < 16) return Error{path + ": admin token must be at least 16 characters"};
  return token;
}

// Writes JSON atomically (temp + rename) so a reader never sees half a file.
void WriteReadyFile(const std::string& path, const nlohmann::json& doc) {
  const std::string temp = path + ".tmp";
  {
    std::ofstream out(temp, std::ios::trunc);
    out << doc.dump(2) << "\n";
  }
  std::filesystem::rename(temp, path);
}

}  // namespace

struct Daemon::Impl {
  Impl(DaemonConfig config, DaemonOptions options)
      : options(std::move(options)),
        io(this->options.io_threads),
        metrics(CODEDRIFT_VERSION),
        config(std::move(config)),
        proposals(this->config.state_dir) {}

  // Builds runtimes for `next`, reusing listeners and windows of `streams` where unchanged.
  // Nothing running is touched until everything new is known to be good.
  Status Apply(const DaemonConfig& next, bool initial);
  std::unique_ptr<StreamListener> MakeListener(const std::shared_ptr<StreamRuntime>& runtime);
  std::shared_ptr<ModelRuntime> Find(const std::string& stream, const std::string& model) const;
  void PublishMetrics();
  void EvaluateAll();
  void OnStateChange(ModelRuntime& model, const StateChange& change);
  Result<WrittenProposal> WriteProposal(ModelRuntime& model);
  void Notify(ModelRuntime& model, const StateChange& change,
              const std::optional<WrittenProposal>& proposal);
  void ReplaceWebhook(const std::optional<WebhookConfig>& next);
  void RetryProposal(ModelRuntime& model);
  std::vector<ProcessSample> ProcessSamples() const;
  nlohmann::json Ports() const;

  DaemonOptions options;
  SteadyClock clock;
  IoPool io;  // an io_context per ingest thread, and one for the control plane
  DaemonMetrics metrics;

  // Held for a whole evaluation pass and by Apply while it swaps listeners and models, so a reload
  // never copies a model's evaluator or state machine while the evaluation thread updates them.
  // Taken before `mutex`, never after it.
  std::mutex evaluation_mutex;
  mutable std::mutex mutex;  // guards the members below (control plane only, never ingest)
  DaemonConfig config;
  std::string admin_token;
  std::vector<std::shared_ptr<StreamRuntime>> streams;
  std::map<std::string, std::unique_ptr<StreamListener>> listeners;  // by stream name
  ProposalWriter proposals;

  std::unique_ptr<WebhookSink> webhook;         // null when alerts.webhook is not set
  std::optional<WebhookConfig> webhook_config;  // what `webhook` was built from
  std::atomic<uint64_t> proposal_failures{0};
  // Models whose alert proposal could not be written (full disk, ...): retried at every
  // evaluation while they stay stale. Evaluation thread only.
  std::set<std::pair<std::string, std::string>> proposal_retries;

  std::unique_ptr<HttpServer> http;
  std::unique_ptr<EvaluationLoop> evaluation;
  std::unique_ptr<Checkpointer> checkpointer;  // set in Run before anything is received
};

std::unique_ptr<StreamListener> Daemon::Impl::MakeListener(
    const std::shared_ptr<StreamRuntime>& runtime) {
  return std::make_unique<StreamListener>(
      io, runtime->config(), runtime->counters(),
      [runtime](std::string_view record) { runtime->Deliver(record); },
      [](std::string_view line) { spdlog::info("{}", line); },
      [runtime](std::string_view run, uint64_t records) { runtime->DeliverRun(run, records); });
}

Status Daemon::Impl::Apply(const DaemonConfig& next, bool initial) {
  auto token = ReadToken(next.http.admin_token_file);
  if (!token.ok()) return token.error();

  // 1. New models with their tables; any bad table rejects the whole config.
  std::vector<std::pair<StreamConfig, ModelList>> built;
  for (const StreamConfig& stream : next.streams) {
    ModelList models;
    for (const ModelConfig& model : stream.models) {
      auto runtime = std::make_shared<ModelRuntime>(stream.name, model, clock, next.evaluate_every);
      if (auto loaded = runtime->LoadTable(); !loaded.ok()) return loaded.error();
      models.push_back(std::move(runtime));
    }
    built.emplace_back(stream, std::move(models));
  }

  std::lock_guard evaluation_lock(evaluation_mutex);
  std::lock_guard lock(mutex);
  // 2. Listeners: keep unchanged ones, bind new ones; a bind failure undoes the new ones.
  std::map<std::string, std::unique_ptr<StreamListener>> fresh;
  std::map<std::string, std::shared_ptr<StreamRuntime>> runtimes;
  std::vector<std::shared_ptr<StreamRuntime>> released;  // streams whose listener we stopped
  for (auto& [stream_config, models] : built) {
    std::shared_ptr<StreamRuntime> existing;
    for (const auto& s : streams) {
      if (s->config().name == stream_config.name) existing = s;
    }
    if (existing && SameListener(existing->config(), stream_config)) {
      runtimes[stream_config.name] = existing;
      continue;
    }
    if (existing && existing->config().listen == stream_config.listen) {
      // Same address, new settings: the old listener must let go of it first.
      if (auto old = listeners.find(stream_config.name); old != listeners.end()) {
        old->second->Stop();
        old->second->WaitStopped(std::chrono::steady_clock::now() + kDrainDeadline);
        listeners.erase(old);
        released.push_back(existing);
      }
    }
    // A stream keeps its counters across reloads (Prometheus counters must not reset).
    auto runtime = existing ? std::make_shared<StreamRuntime>(stream_config, existing->counters())
                            : std::make_shared<StreamRuntime>(stream_config);
    auto listener = MakeListener(runtime);
    if (auto started = listener->Start(); !started.ok()) {
      for (auto& [name, l] : fresh) l->Stop();
      // Give the streams whose address we released their old listeners back.
      for (const auto& stream : released) {
        auto restored = MakeListener(stream);
        if (restored->Start().ok()) {
          listeners[stream->config().name] = std::move(restored);
        } else {
          spdlog::error("{}: could not re-bind its old address after the failed reload",
                        stream->config().name);
        }
      }
      return started.error();
    }
    fresh[stream_config.name] = std::move(listener);
    runtimes[stream_config.name] = runtime;
  }

  // 3. Commit: models adopt the windows of their predecessors, lists are swapped in.
  std::vector<std::shared_ptr<StreamRuntime>> next_streams;
  for (auto& [stream_config, models] : built) {
    auto runtime = runtimes[stream_config.name];
    for (auto& model : models) {
      for (const auto& old_stream : streams) {
        if (old_stream->config().name != stream_config.name) continue;
        const auto old_models = old_stream->models();  // held for the loop
        for (const auto& old_model : *old_models) {
          if (old_model->name() == model->name() && model->AdoptCountsFrom(*old_model)) {
            spdlog::info("{}/{}: kept its window across the reload", stream_config.name,
                         model->name());
          }
        }
      }
    }
    runtime->set_config(stream_config);
    runtime->SetModels(models);
    next_streams.push_back(runtime);
  }
  for (auto& [name, listener] : listeners) {
    if (!fresh.count(name) && !runtimes.count(name)) {
      listener->Stop();
    } else if (fresh.count(name)) {
      listener->Stop();  // replaced by a listener with new settings
    }
  }
  for (auto& [name, listener] : fresh) listeners[name] = std::move(listener);
  for (auto it = listeners.begin(); it != listeners.end();) {
    it = runtimes.count(it->first) ? std::next(it) : listeners.erase(it);
  }
  streams = std::move(next_streams);
  admin_token = std::move(token).value();
  ReplaceWebhook(next.alerts.webhook);
  if (!initial && !(next.http.host == config.http.host && next.http.port == config.http.port)) {
    spdlog::warn("http listen address changes take effect only after a restart");
  }
  const auto http_config = config.http;
  config = next;
  config.http.host = http_config.host;
  config.http.port = http_config.port;

  std::vector<StreamCountersEntry> entries;
  for (const auto& s : streams) entries.push_back({s->config().name, s->counters()});
  metrics.SetStreams(std::move(entries));
  return Ok{};
}

std::shared_ptr<ModelRuntime> Daemon::Impl::Find(const std::string& stream,
                                                 const std::string& model) const {
  std::lock_guard lock(mutex);
  for (const auto& s : streams) {
    if (s->config().name != stream) continue;
    const auto models = s->models();
    for (const auto& m : *models) {
      if (m->name() == model) return m;
    }
  }
  return nullptr;
}

nlohmann::json Daemon::Impl::Ports() const {
  nlohmann::json doc = {{"pid", ::getpid()}, {"http_port", http ? http->bound_port() : 0}};
  std::lock_guard lock(mutex);
  for (const auto& [name, listener] : listeners) doc["streams"][name] = listener->bound_port();
  return doc;
}

void Daemon::Impl::PublishMetrics() {
  std::vector<ModelMetricsSnapshot> snapshots;
  std::vector<std::shared_ptr<StreamRuntime>> current;
  {
    std::lock_guard lock(mutex);
    current = streams;
  }
  for (const auto& stream : current) {
    const auto models = stream->models();
    for (const auto& model : *models) {
      const ModelView view = model->View();
      ModelMetricsSnapshot m;
      m.stream = view.stream;
      m.model = view.name;
      m.state = static_cast<int>(view.state);
      m.alerts_total = view.alerts_total;
      m.kraft_sum = std::nan("");
      if (view.evaluation) {
        const Evaluation& e = *view.evaluation;
        m.entropy_plugin = e.entropy.plugin_bits;
        m.entropy_mm = e.entropy.miller_madow_bits;
        m.entropy_stderr = e.entropy.stderr_bits;
        m.deployed_mean = e.deployed_mean_bits;
        m.retrained_mean = e.retrained_mean_bits;
        m.redundancy = e.redundancy_bits;
        m.saving = e.saving_ratio;
        m.saving_lower = e.saving_lower_ratio;
        m.payback_seconds = e.payback_seconds;
        m.kraft_sum = e.kraft_sum;
        m.window_symbols = e.window_symbols;
        m.symbols_total = e.symbols_total;
        m.unknown_symbols_total = e.unknown_symbols_total;
      }
      m.symbol_counts = view.window_counts;
      snapshots.push_back(std::move(m));
    }
  }
  metrics.UpdateModels(std::move(snapshots));
}

void Daemon::Impl::EvaluateAll() {
  std::lock_guard evaluation_lock(evaluation_mutex);
  const auto started = std::chrono::steady_clock::now();
  std::vector<std::shared_ptr<StreamRuntime>> current;
  std::chrono::nanoseconds checkpoint_every;
  {
    std::lock_guard lock(mutex);
    current = streams;
    checkpoint_every = config.checkpoint_every;
  }
  std::vector<std::shared_ptr<ModelRuntime>> evaluated;
  for (const auto& stream : current) {
    const auto models = stream->models();
    for (const auto& model : *models) {
      if (auto change = model->Evaluate()) OnStateChange(*model, *change);
      RetryProposal(*model);
      evaluated.push_back(model);
    }
  }
  // Right after an evaluation, so the checkpoint's history and evaluator state agree.
  if (checkpointer) checkpointer->WriteIfDue(evaluated, checkpoint_every);
  metrics.ObserveEvaluation(
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count());
  metrics.UpdateProcess(ProcessSamples());
  PublishMetrics();
}

void Daemon::Impl::RetryProposal(ModelRuntime& model) {
  const auto key = std::make_pair(model.stream(), model.name());
  if (!proposal_retries.count(key)) return;
  if (model.View().state != CodeState::kStale) {
    proposal_retries.erase(key);  // the alert is over: nothing to propose any more
  } else if (WriteProposal(model).ok()) {
    proposal_retries.erase(key);
  }
}

void Daemon::Impl::OnStateChange(ModelRuntime& model, const StateChange& change) {
  bool log_alerts = true;
  {
    std::lock_guard lock(mutex);
    log_alerts = config.alerts.log;
  }
  if (log_alerts) {
    spdlog::warn("{}/{}: {} -> {}: {}", model.stream(), model.name(), CodeStateName(change.from),
                 CodeStateName(change.to), change.reason);
  }
  if (!change.alert) return;
  std::optional<WrittenProposal> proposal;
  if (auto written = WriteProposal(model); written.ok()) {
    proposal = written.value();
  } else {
    spdlog::error("{}/{}: proposal not written, retrying at every evaluation while stale: {}",
                  model.stream(), model.name(), written.error().message);
    proposal_retries.insert({model.stream(), model.name()});
  }
  Notify(model, change, proposal);
}

// Webhooks carry alerts only (entering stale outside the cooldown): a receiver that pages
// people must not be woken by every flicker into drifting.
void Daemon::Impl::Notify(ModelRuntime& model, const StateChange& change,
                          const std::optional<WrittenProposal>& proposal) {
  std::lock_guard lock(mutex);
  if (!webhook) return;
  const ModelView view = model.View();
  AlertNotice notice;
  notice.stream = model.stream();
  notice.model = model.name();
  notice.from_state = CodeStateName(change.from);
  notice.to_state = CodeStateName(change.to);
  notice.reason = change.reason;
  nlohmann::json figures = ModelJson(view, false);
  for (const char* key : {"stream", "model", "state", "reason", "proposal", "top_drift", "warnings",
                          "alert", "table", "table_problem", "state_since"}) {
    figures.erase(key);
  }
  notice.figures = std::move(figures);
  if (proposal) {
    notice.proposal_url = "/api/v1/models/" + model.stream() + "/" + model.name() + "/proposal";
    notice.proposal_checksum = proposal->checksum;
  }
  notice.unix_time = view.state_since_unix;
  notice.sequence = view.alerts_total;
  webhook->Enqueue(std::move(notice));
}

void Daemon::Impl::ReplaceWebhook(const std::optional<WebhookConfig>& next) {
  const bool same =
      webhook_config.has_value() == next.has_value() &&
      (!next || (next->url == webhook_config->url && next->timeout == webhook_config->timeout &&
                 next->retries == webhook_config->retries));
  if (same) return;
  if (webhook) webhook->Stop();
  webhook = next ? std::make_unique<WebhookSink>(io.control(), WebhookOptions::FromConfig(*next))
                 : nullptr;
  webhook_config = next;
}

std::vector<ProcessSample> Daemon::Impl::ProcessSamples() const {
  std::vector<ProcessSample> samples;
  if (checkpointer) {
    samples.push_back({"codedrift_checkpoint_failures_total",
                       "Checkpoint writes that failed (full disk, unwritable state_dir).",
                       true,
                       {},
                       static_cast<double>(checkpointer->failures())});
  }
  samples.push_back({"codedrift_proposal_failures_total",
                     "Proposals that could not be written (full disk, unwritable state_dir).",
                     true,
                     {},
                     static_cast<double>(proposal_failures.load())});
  std::lock_guard lock(mutex);
  if (webhook) {
    const WebhookCounters c = webhook->counters();
    const std::string help =
        "Webhook alert deliveries, by result (failed_attempt counts every "
        "try; dropped: given up or pushed out of a full queue).";
    samples.push_back({"codedrift_webhook_deliveries_total",
                       help,
                       true,
                       {{"result", "delivered"}},
                       static_cast<double>(c.delivered)});
    samples.push_back({"codedrift_webhook_deliveries_total",
                       help,
                       true,
                       {{"result", "failed_attempt"}},
                       static_cast<double>(c.failed_attempts)});
    samples.push_back({"codedrift_webhook_deliveries_total",
                       help,
                       true,
                       {{"result", "dropped"}},
                       static_cast<double>(c.dropped_after_retries + c.dropped_queue_full)});
    samples.push_back({"codedrift_webhook_queue",
                       "Alerts waiting for webhook delivery.",
                       false,
                       {},
                       static_cast<double>(c.queued)});
  }
  return samples;
}

Result<WrittenProposal> Daemon::Impl::WriteProposal(ModelRuntime& model) {
  auto table = model.Retrain();
  if (!table.ok()) return table.error();
  auto written = proposals.Write(model.stream(), model.name(), std::move(table).value());
  if (!written.ok()) {
    ++proposal_failures;
    return written.error();
  }
  model.SetLatestProposal(written.value().path);
  spdlog::info("{}/{}: proposal written to {} (checksum {})", model.stream(), model.name(),
               written.value().path, written.value().checksum);
  return written.value();
}

Daemon::Daemon(DaemonConfig config, DaemonOptions options)
    : impl_(std::make_unique<Impl>(std::move(config), std::move(options))) {}

Daemon::~Daemon() = default;

int Daemon::Run() {
  Impl& d = *impl_;
  if (auto applied = d.Apply(d.config, /*initial=*/true); !applied.ok()) {
    spdlog::error("{}", applied.error().message);
    return 2;
  }
  // Restore before any io thread runs: no record reaches a model before its checkpoint.
  d.checkpointer = std::make_unique<Checkpointer>(d.config.state_dir, d.clock);
  std::vector<std::shared_ptr<ModelRuntime>> all_models;
  for (const auto& stream : d.streams) {
    const std::shared_ptr<const ModelList> list = stream->models();
    all_models.insert(all_models.end(), list->begin(), list->end());
  }
  d.checkpointer->Restore(all_models);
  HttpServerOptions http_options;
  http_options.host = d.config.http.host;
  http_options.port = d.config.http.port;
  d.http = std::make_unique<HttpServer>(d.io.control(), BuildRouter(*this), http_options);
  if (auto started = d.http->Start(); !started.ok()) {
    spdlog::error("{}", started.error().message);
    return 2;
  }
  spdlog::info("serving http on {}:{}", d.config.http.host, d.http->bound_port());

  std::promise<int> stop_signal;
  asio::signal_set signals(d.io.control(), SIGTERM, SIGINT, SIGHUP);
  std::function<void(const boost::system::error_code&, int)> on_signal =
      [&](const boost::system::error_code& ec, int number) {
        if (ec) return;
        if (number != SIGHUP) {
          stop_signal.set_value(number);
          return;
        }
        if (auto reloaded = Reload(); !reloaded.ok()) {
          spdlog::error("reload rejected, the running config stays: {}", reloaded.error().message);
        }
        signals.async_wait(on_signal);
      };
  signals.async_wait(on_signal);

  d.io.Start();
  d.evaluation =
      std::make_unique<EvaluationLoop>(d.config.evaluate_every, [&d] { d.EvaluateAll(); });
  d.evaluation->Start();
  if (!d.options.ready_file.empty()) WriteReadyFile(d.options.ready_file, d.Ports());
  spdlog::info("ready");

  const int number = stop_signal.get_future().get();
  spdlog::info("signal {}: stopping; draining connections", number);
  // Stop accepting and let in-flight data reach the models, then evaluate one last time.
  const auto deadline = std::chrono::steady_clock::now() + kDrainDeadline;
  {
    std::lock_guard lock(d.mutex);
    for (auto& [name, listener] : d.listeners) listener->Stop();
  }
  {
    std::lock_guard lock(d.mutex);
    for (auto& [name, listener] : d.listeners) {
      if (!listener->WaitStopped(deadline)) spdlog::warn("{}: drain deadline passed", name);
    }
  }
  d.evaluation->Stop();
  d.EvaluateAll();
  {
    std::vector<std::shared_ptr<ModelRuntime>> models;
    std::lock_guard lock(d.mutex);
    for (const auto& stream : d.streams) {
      const std::shared_ptr<const ModelList> list = stream->models();
      models.insert(models.end(), list->begin(), list->end());
    }
    d.checkpointer->WriteAll(models);  // after the final evaluation: nothing received is lost
  }
  {
    std::lock_guard lock(d.mutex);
    for (const auto& stream : d.streams) {
      spdlog::info("{}: {} records, {} bytes received", stream->config().name,
                   stream->counters()->records_total.load(),
                   stream->counters()->bytes_total.load());
    }
  }
  {
    std::lock_guard lock(d.mutex);
    if (d.webhook) {
      if (!d.webhook->WaitIdle(std::chrono::steady_clock::now() + std::chrono::seconds(2))) {
        spdlog::warn("webhook: {} alert(s) not delivered before exit",
                     d.webhook->counters().queued);
      }
      d.webhook->Stop();
    }
  }
  d.http->Stop();
  d.http->WaitStopped(std::chrono::steady_clock::now() + std::chrono::seconds(2));
  signals.cancel();
  d.io.Stop();
  spdlog::info("stopped");
  return 0;
}

Status Daemon::Reload() {
  Impl& d = *impl_;
  if (d.options.config_path.empty()) {
    return Error{"running on the embedded default config: nothing to re-read"};
  }
  auto next = LoadDaemonConfig(d.options.config_path);
  if (!next.ok()) return next.error();
  if (auto applied = d.Apply(next.value(), /*initial=*/false); !applied.ok()) return applied;
  spdlog::info("reloaded {}", d.options.config_path);
  return Ok{};
}

std::vector<ModelView> Daemon::Views() const {
  std::vector<std::shared_ptr<StreamRuntime>> current;
  {
    std::lock_guard lock(impl_->mutex);
    current = impl_->streams;
  }
  std::vector<ModelView> views;
  for (const auto& stream : current) {
    const auto models = stream->models();
    for (const auto& model : *models) views.push_back(model->View());
  }
  return views;
}

std::optional<ModelView> Daemon::View(const std::string& stream, const std::string& model) const {
  auto runtime = impl_->Find(stream, model);
  if (!runtime) return std::nullopt;
  return runtime->View();
}

Result<std::string> Daemon::WriteProposalNow(const std::string& stream, const std::string& model) {
  auto runtime = impl_->Find(stream, model);
  if (!runtime) return Error{"no model " + stream + "/" + model};
  auto done = std::make_shared<std::promise<Result<std::string>>>();
  auto answer = done->get_future();
  impl_->evaluation->Post([this, runtime, done] {
    auto written = impl_->WriteProposal(*runtime);
    if (written.ok()) {
      done->set_value(written.value().path);
    } else {
      done->set_value(written.error());
    }
  });
  if (answer.wait_for(std::chrono::seconds(30)) != std::future_status::ready) {
    return Error{"the evaluation thread did not answer within 30 s"};
  }
  return answer.get();
}

std::string Daemon::RenderMetrics() const { return impl_->metrics.RenderMetrics(); }

bool Daemon::Authorized(const HttpRequest& request) const {
  std::string token;
  {
    std::lock_guard lock(impl_->mutex);
    token = impl_->admin_token;
  }
  return BearerTokenMatches(request, token);
}

}  // namespace codedrift
